// Which results the Images tab compares, their loaded pixels (and undetermined masks), the
// reference they are compared with, and the comparisons with a result used as reference: kept
// for the page's shell, which re-renders when they change.
import type { ReactiveController, ReactiveControllerHost } from 'lit';
import type { Comparison } from '../core/compare';
import type { Image2D } from '../core/image';
import { loadResultImage } from '../store/results';
import type { EngineClient } from '../worker/client';
import { offer, replace, withdraw, type CompareSet } from './logic/compare-set';
import { TRUTH } from './results-view';
import { errorText } from './logic/error-text';

/** The comparison state of the Images tab (ids and maps are replaced, never mutated, so lit sees each change). */
export class ComparisonKeeper implements ReactiveController {
  /** Compared result ids, in order (at most four). */
  ids: string[] = [];
  /** A result waiting for a place in the full comparison ('' when none): the user chooses which image leaves. */
  waiting = '';
  /** Loaded pixels by result id. */
  images = new Map<string, Image2D>();
  /** Undetermined masks of the loaded results that keep one (DBP), by result id. */
  masks = new Map<string, Uint8Array>();
  /** 'truth', a result id, or '' for no reference. */
  referenceId = '';
  /** Comparisons against a result reference, by result id (text: why there is none). */
  comparisons = new Map<string, Comparison | string>();

  constructor(private readonly host: ReactiveControllerHost, private readonly client: () => EngineClient) {
    host.addController(this);
  }

  hostConnected(): void {}

  private changed() {
    this.host.requestUpdate();
  }

  /** A scan was chosen: its latest result is compared (none when it has none), nothing waits, no comparison is kept. */
  startScan(latest: string | undefined) {
    this.ids = latest ? [latest] : [];
    this.waiting = '';
    this.comparisons = new Map();
    this.changed();
  }

  /** The chosen scan's reference: its ground truth when it has one, else none; the compared images are loaded. */
  async scanReference(hasTruth: boolean) {
    this.referenceId = hasTruth ? TRUTH : '';
    this.changed();
    await this.load(this.ids);
  }

  /** Loads the pixels (and masks) of the results not loaded yet. */
  async load(ids: string[]) {
    const missing = ids.filter((id) => id && id !== TRUTH && !this.images.has(id));
    if (!missing.length) return;
    const loaded = await Promise.all(missing.map((id) => loadResultImage(id)));
    const next = new Map(this.images);
    const masks = new Map(this.masks);
    loaded.forEach((l) => {
      next.set(l.meta.id, l.image);
      if (l.undetermined) masks.set(l.meta.id, l.undetermined);
    });
    this.masks = masks;
    this.images = next;
    this.changed();
  }

  /** Ticked or unticked in the list. */
  async toggle(id: string) {
    if (this.ids.includes(id)) this.setCompared(withdraw(this.set(), id));
    else await this.offer(id);
  }

  /** A result joins the comparison, or waits for the user to choose which image leaves when it is full. */
  async offer(id: string) {
    this.setCompared(offer(this.set(), id));
    await this.load(this.ids);
    await this.updateComparisons();
  }

  /** The waiting result takes the place of `leave`. */
  async replace(leave: string) {
    this.setCompared(replace(this.set(), leave));
    await this.load(this.ids);
    await this.updateComparisons();
  }

  /** Nothing waits any more. */
  dismissWaiting() {
    this.waiting = '';
    this.changed();
  }

  /** A deleted result leaves the comparison; when it was the reference, the ground truth (or nothing) takes its place. */
  deleted(id: string, hasTruth: boolean) {
    this.setCompared(withdraw(this.set(), id));
    if (this.referenceId === id) this.referenceId = hasTruth ? TRUTH : '';
    this.changed();
  }

  /** Loaded images that carry an old mu_water (`ids`) are dropped with every comparison, to be loaded again. */
  forget(ids: Set<string>) {
    this.images = new Map([...this.images].filter(([id]) => !ids.has(id)));
    this.comparisons = new Map();
    this.changed();
  }

  async setReference(id: string) {
    this.referenceId = id;
    this.comparisons = new Map();
    this.changed();
    await this.load([id]);
    await this.updateComparisons();
  }

  /** Comparisons with a result used as reference (ground-truth figures are stored with each result). */
  async updateComparisons() {
    const ref = this.referenceId;
    if (!ref || ref === TRUTH) return;
    const todo = this.ids.filter((id) => id !== ref && !this.comparisons.has(id));
    for (const id of todo) {
      let value: Comparison | string;
      try {
        value = await this.client().compare(id, { kind: 'result', id: ref });
      } catch (err) {
        value = errorText(err);
      }
      if (this.referenceId !== ref) return;
      this.comparisons = new Map(this.comparisons).set(id, value);
      this.changed();
    }
  }

  private set(): CompareSet {
    return { ids: this.ids, waiting: this.waiting };
  }

  private setCompared(set: CompareSet) {
    this.ids = set.ids;
    this.waiting = set.waiting ?? '';
    this.changed();
  }
}

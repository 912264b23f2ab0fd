import { html, LitElement, css, nothing } from 'lit';
import { formatDuration } from './logic/time-left';
import type { QueueJob, QueueState } from './logic/queue-state';
import { theme } from './theme';

export type { QueueJob } from './logic/queue-state';

const STATE_WORDS: Record<QueueState, string> = { waiting: 'Waiting', running: 'Running', done: 'Done', failed: 'Failed', cancelled: 'Cancelled', interrupted: 'Interrupted' };

/**
 * The queue of reconstructions: progress with time left, cancel, and what became of each run;
 * a run interrupted by a reload or a closed tab, with one click to run it again.
 * @fires job-cancel - detail: { key }
 * @fires job-remove - detail: { key }
 * @fires job-show - detail: { key }, show a finished job's image
 * @fires job-rerun - detail: { key }, run an interrupted job again
 * @fires queue-clear - remove every finished job
 */
export class RunQueue extends LitElement {
  static properties = { jobs: { attribute: false } };
  /** Jobs in order. */
  declare jobs: QueueJob[];

  static styles = [theme, css`
    ol { list-style: none; padding: 0; margin: 0; display: flex; flex-direction: column; gap: 8px; }
    li { border: 1px solid var(--border); border-radius: 8px; padding: 9px 12px; background: var(--surface); }
    .head { display: flex; justify-content: space-between; gap: 10px; align-items: baseline; }
    .name { font-weight: 600; font-size: 13.5px; }
    .scan { font-size: 12px; color: var(--muted); }
    .state { font-size: 12px; font-weight: 600; padding: 1px 8px; border-radius: 10px; background: var(--bg); color: var(--muted); white-space: nowrap; }
    .state.running { background: var(--accent-soft); color: var(--accent); }
    .state.done { background: #e6f4ea; color: var(--ok); }
    .state.failed { background: var(--danger-soft); color: var(--danger); }
    .state.interrupted { background: var(--warn-soft); color: var(--warn); }
    progress { margin-top: 7px; }
    .line { display: flex; justify-content: space-between; align-items: center; gap: 8px; font-size: 12px; color: var(--muted); margin-top: 4px; }
    .empty { color: var(--muted); font-size: 13px; }
    .bar { display: flex; justify-content: flex-end; margin-top: 8px; }
  `];

  constructor() {
    super();
    this.jobs = [];
  }

  private emit(name: string, key?: string) {
    this.dispatchEvent(new CustomEvent(name, { detail: { key }, bubbles: true, composed: true }));
  }

  private job(j: QueueJob) {
    const finished = j.state === 'done' || j.state === 'failed' || j.state === 'cancelled' || j.state === 'interrupted';
    return html`<li data-state=${j.state} data-key=${j.key}>
      <div class="head"><span class="name">${j.name}</span><span class="state ${j.state}">${STATE_WORDS[j.state]}</span></div>
      <div class="scan">${j.scanName}</div>
      ${j.state === 'running' ? html`<progress max="1" .value=${j.fraction} aria-label="Progress of ${j.name}"></progress>` : nothing}
      <div class="line">
        <span class="num">${j.state === 'running'
          ? `${(100 * j.fraction).toFixed(0)}% · ${j.stage || 'starting'} · ${j.remainingMs !== undefined ? `${formatDuration(j.remainingMs)} left` : 'estimating time left'}`
          : j.state === 'done' ? `${j.seconds?.toFixed(1)} s` : j.state === 'failed' ? '' : j.state === 'waiting' ? 'in line'
          : j.state === 'interrupted' ? `the page was reloaded or closed while it ${j.was === 'running' ? 'ran' : 'waited'}; nothing was stored` : ''}</span>
        <span>
          ${j.state === 'interrupted' ? html`<button class="small primary" @click=${() => this.emit('job-rerun', j.key)}>Run again</button>` : nothing}
          ${finished ? nothing : html`<button class="small danger" @click=${() => this.emit('job-cancel', j.key)}>Cancel</button>`}
          ${j.state === 'done' ? html`<button class="small" @click=${() => this.emit('job-show', j.key)}>Show image</button>` : nothing}
          ${finished ? html`<button class="small" @click=${() => this.emit('job-remove', j.key)}>Remove</button>` : nothing}
        </span>
      </div>
      ${j.error ? html`<div class="error" role="alert">${j.error}</div>` : nothing}
    </li>`;
  }

  render() {
    if (!this.jobs.length) return html`<p class="empty">Nothing queued. Set up a recipe and add it to the queue; runs start at once, one after another.</p>`;
    return html`<ol aria-label="Reconstruction queue">${this.jobs.map((j) => this.job(j))}</ol>
      ${this.jobs.some((j) => j.state !== 'running' && j.state !== 'waiting') ? html`<div class="bar"><button class="small" @click=${() => this.emit('queue-clear')}>Clear finished</button></div>` : nothing}`;
  }
}
customElements.define('rf-run-queue', RunQueue);

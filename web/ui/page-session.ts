// This page's session: an id for the jobs it queues, and a Web Lock held while the page lives,
// so that another tab (or this page after a reload) can tell an interrupted job from one still
// running elsewhere. Without Web Locks, every other page counts as gone.
import { newId } from '../store/scans';

const PREFIX = 'rimfill-page/';

/** Starts this page's session and holds its lock until the page goes away. */
export function startSession(): string {
  const id = newId();
  const locks = globalThis.navigator?.locks;
  // The lock is released when the page's document goes away (reload, tab closed).
  void locks?.request(PREFIX + id, () => new Promise<void>(() => undefined)).catch(() => undefined);
  return id;
}

/** Sessions of pages open now (their locks are held). */
export async function liveSessions(): Promise<Set<string>> {
  const locks = globalThis.navigator?.locks;
  if (!locks) return new Set();
  const held = (await locks.query()).held ?? [];
  return new Set(held.map((l) => l.name ?? '').filter((n) => n.startsWith(PREFIX)).map((n) => n.slice(PREFIX.length)));
}

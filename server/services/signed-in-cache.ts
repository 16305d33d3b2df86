import type { SessionUser } from '../../shared/auth';

/**
 * Who is signed in, remembered for a moment: each API request otherwise costs two extra database
 * round trips (the stored session, then the user and shop) before its own query, and under load
 * those dominate. Entries live `ttlMs` at most.
 *
 * Exactness: every change this server makes — sign-in, sign-out, role or password change,
 * switching an account off, renaming the shop — drops the affected entries at once (the store
 * wrapper and the routes call forget…). A change made outside this process (SQL by hand, a
 * restore) shows within `ttlMs`. ttlMs = 0 turns the cache off.
 *
 * A look-up that races an invalidation must not put back what was just dropped: fills carry the
 * generation seen when their database read began and are ignored if it has moved on since.
 *
 * With several server nodes, each change made here is also passed to `onChange` (see
 * signed-in-sharing.ts, which tells the other nodes), and their changes arrive through `apply`.
 */
export type SignedInChange = { kind: 'session'; sid: string } | { kind: 'user'; userId: number } | { kind: 'all' };

export class SignedInCache {
  private readonly ttlMs: number;
  private readonly now: () => number;
  private readonly sessions = new Map<string, { at: number; json: string; userId: number | null }>();
  private readonly users = new Map<number, { at: number; user: SessionUser | null }>();
  private gen = 0;
  private listener: ((change: SignedInChange) => void) | undefined;
  /** Entries kept before expired ones are swept: far more than a workshop has open sessions. */
  private static readonly SWEEP_ABOVE = 5000;

  constructor(ttlMs: number, now: () => number = Date.now) {
    this.ttlMs = ttlMs;
    this.now = now;
  }

  get generation(): number {
    return this.gen;
  }

  private fresh(at: number): boolean {
    return this.ttlMs > 0 && this.now() - at < this.ttlMs;
  }

  /** The stored session's JSON, or undefined when it must be read from the database. */
  session(sid: string): string | undefined {
    const e = this.sessions.get(sid);
    if (e && this.fresh(e.at)) return e.json;
    if (e) this.sessions.delete(sid);
    return undefined;
  }

  putSession(sid: string, json: string, userId: number | null, generation: number): void {
    if (this.ttlMs <= 0 || generation !== this.gen) return;
    this.sweep(this.sessions);
    this.sessions.set(sid, { at: this.now(), json, userId });
  }

  /** The user row (null: switched off or gone), or undefined when it must be read. */
  user(id: number): SessionUser | null | undefined {
    const e = this.users.get(id);
    if (e && this.fresh(e.at)) return e.user;
    if (e) this.users.delete(id);
    return undefined;
  }

  putUser(id: number, user: SessionUser | null, generation: number): void {
    if (this.ttlMs <= 0 || generation !== this.gen) return;
    this.sweep(this.users);
    this.users.set(id, { at: this.now(), user });
  }

  /** Called with every change made through forget… and clear (not with those applied). */
  onChange(listener: (change: SignedInChange) => void): void {
    this.listener = listener;
  }

  forgetSession(sid: string): void {
    this.apply({ kind: 'session', sid });
    this.listener?.({ kind: 'session', sid });
  }

  /** After a change to a user: their row and every session of theirs are read afresh. */
  forgetUser(userId: number): void {
    this.apply({ kind: 'user', userId });
    this.listener?.({ kind: 'user', userId });
  }

  /** After a change that touches every signed-in user of a shop (its name, say). */
  clear(): void {
    this.apply({ kind: 'all' });
    this.listener?.({ kind: 'all' });
  }

  /** Drops what a change touches, without passing it on: for changes made by another node. */
  apply(change: SignedInChange): void {
    this.gen++;
    if (change.kind === 'session') this.sessions.delete(change.sid);
    else if (change.kind === 'user') {
      this.users.delete(change.userId);
      for (const [sid, e] of this.sessions) if (e.userId === change.userId) this.sessions.delete(sid);
    } else {
      this.sessions.clear();
      this.users.clear();
    }
  }

  private sweep<K, V extends { at: number }>(map: Map<K, V>): void {
    if (map.size < SignedInCache.SWEEP_ABOVE) return;
    for (const [k, e] of map) if (!this.fresh(e.at)) map.delete(k);
    if (map.size >= SignedInCache.SWEEP_ABOVE) map.clear();
  }
}

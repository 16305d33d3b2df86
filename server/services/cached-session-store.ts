import session, { type SessionData, type Store } from 'express-session';
import type { SignedInCache } from './signed-in-cache';

type Callback<T = void> = (err?: unknown, value?: T) => void;

/**
 * The session store (PostgreSQL) with reads served from the signed-in cache. Writes and deletes go
 * to the database first and then drop the cached copy, so this process never serves a session it
 * has changed or ended. Copies are kept as JSON because express-session mutates what it is given.
 */
export class CachedSessionStore extends session.Store {
  private readonly inner: Store;
  private readonly cache: SignedInCache;

  constructor(inner: Store, cache: SignedInCache) {
    super();
    this.inner = inner;
    this.cache = cache;
  }

  override get(sid: string, callback: Callback<SessionData | null>): void {
    const hit = this.cache.session(sid);
    if (hit !== undefined) {
      const sess = JSON.parse(hit) as SessionData;
      const expires = sess.cookie?.expires ? new Date(sess.cookie.expires).getTime() : Infinity;
      if (expires > Date.now()) {
        callback(null, sess);
        return;
      }
      this.cache.forgetSession(sid);
    }
    const generation = this.cache.generation;
    this.inner.get(sid, (err, sess) => {
      if (!err && sess) this.cache.putSession(sid, JSON.stringify(sess), sess.userId ?? null, generation);
      callback(err, sess ?? null);
    });
  }

  override set(sid: string, sess: SessionData, callback?: Callback): void {
    this.inner.set(sid, sess, (err) => {
      this.cache.forgetSession(sid);
      callback?.(err);
    });
  }

  override destroy(sid: string, callback?: Callback): void {
    this.inner.destroy(sid, (err) => {
      this.cache.forgetSession(sid);
      callback?.(err);
    });
  }

  override touch(sid: string, sess: SessionData, callback?: () => void): void {
    if (this.inner.touch) this.inner.touch(sid, sess, () => callback?.());
    else callback?.();
  }
}

import { describe, expect, it } from 'vitest';
import session, { type SessionData } from 'express-session';
import { SignedInCache } from '../../server/services/signed-in-cache';
import { CachedSessionStore } from '../../server/services/cached-session-store';
import type { SessionUser } from '../../shared/auth';

// The signed-in cache trades a bounded delay for changes made outside the server against two
// database round trips per request. These checks pin down the bound and the cases with no delay.

const user = (id: number, role: SessionUser['role'] = 'technician'): SessionUser => ({
  id,
  name: `User ${id}`,
  email: `u${id}@quietpath.test`,
  role,
  customerId: null,
  shop: { id: 1, name: 'Test bench' },
});

function clock(start = 1_000_000) {
  let t = start;
  return { now: () => t, advance: (ms: number) => (t += ms) };
}

describe('SignedInCache', () => {
  it('serves an entry for less than its lifetime, then asks for a fresh read', () => {
    const c = clock();
    const cache = new SignedInCache(1000, c.now);
    cache.putUser(7, user(7), cache.generation);
    c.advance(999);
    expect(cache.user(7)?.id).toBe(7);
    c.advance(1);
    expect(cache.user(7)).toBeUndefined();
  });

  it('remembers a switched-off user as null (refused), not as unknown', () => {
    const cache = new SignedInCache(1000);
    cache.putUser(8, null, cache.generation);
    expect(cache.user(8)).toBeNull();
  });

  it('forgetUser drops the user and every session of theirs, and no other', () => {
    const cache = new SignedInCache(1000);
    const g = cache.generation;
    cache.putUser(1, user(1), g);
    cache.putUser(2, user(2), g);
    cache.putSession('a', '{"userId":1}', 1, g);
    cache.putSession('b', '{"userId":1}', 1, g);
    cache.putSession('c', '{"userId":2}', 2, g);
    cache.forgetUser(1);
    expect(cache.user(1)).toBeUndefined();
    expect(cache.session('a')).toBeUndefined();
    expect(cache.session('b')).toBeUndefined();
    expect(cache.user(2)?.id).toBe(2);
    expect(cache.session('c')).toBe('{"userId":2}');
  });

  it('a read that began before an invalidation does not put its (stale) result back', () => {
    const cache = new SignedInCache(1000);
    const before = cache.generation;
    cache.forgetUser(3); // e.g. the owner switched the account off while the read was under way
    cache.putUser(3, user(3), before);
    cache.putSession('s', '{"userId":3}', 3, before);
    expect(cache.user(3)).toBeUndefined();
    expect(cache.session('s')).toBeUndefined();
  });

  it('a lifetime of 0 turns the cache off', () => {
    const cache = new SignedInCache(0);
    cache.putUser(4, user(4), cache.generation);
    cache.putSession('x', '{}', 4, cache.generation);
    expect(cache.user(4)).toBeUndefined();
    expect(cache.session('x')).toBeUndefined();
  });

  it('clear() drops everything (a shop rename reaches every signed-in user)', () => {
    const cache = new SignedInCache(1000);
    cache.putUser(5, user(5), cache.generation);
    cache.putSession('y', '{}', 5, cache.generation);
    cache.clear();
    expect(cache.user(5)).toBeUndefined();
    expect(cache.session('y')).toBeUndefined();
  });
});

/** A store that counts its reads, standing in for the database one. */
class CountingStore extends session.Store {
  readonly data = new Map<string, string>();
  reads = 0;
  override get(sid: string, cb: (err: unknown, s?: SessionData | null) => void) {
    this.reads++;
    const v = this.data.get(sid);
    cb(null, v ? (JSON.parse(v) as SessionData) : null);
  }
  override set(sid: string, s: SessionData, cb?: (err?: unknown) => void) {
    this.data.set(sid, JSON.stringify(s));
    cb?.();
  }
  override destroy(sid: string, cb?: (err?: unknown) => void) {
    this.data.delete(sid);
    cb?.();
  }
}

const read = (store: session.Store, sid: string) =>
  new Promise<SessionData | null | undefined>((resolve, reject) => store.get(sid, (err, s) => (err ? reject(err) : resolve(s))));
const write = (store: session.Store, sid: string, s: SessionData) =>
  new Promise<void>((resolve, reject) => store.set(sid, s, (err) => (err ? reject(err) : resolve())));
const sess = (userId: number, expiresInMs: number) =>
  ({ userId, cookie: { originalMaxAge: expiresInMs, expires: new Date(Date.now() + expiresInMs) } }) as unknown as SessionData;

describe('CachedSessionStore', () => {
  it('reads the database once within the lifetime, and hands out independent copies', async () => {
    const inner = new CountingStore();
    const store = new CachedSessionStore(inner, new SignedInCache(1000));
    await write(store, 's1', sess(1, 60_000));
    const first = await read(store, 's1');
    (first as SessionData & { userId: number }).userId = 99; // express-session mutates what it gets
    const second = await read(store, 's1');
    expect(inner.reads).toBe(1);
    expect(second?.userId).toBe(1);
  });

  it('signing out (destroy) and saving (set) are seen by the next read at once', async () => {
    const inner = new CountingStore();
    const store = new CachedSessionStore(inner, new SignedInCache(1000));
    await write(store, 's2', sess(2, 60_000));
    await read(store, 's2');
    await write(store, 's2', { ...sess(2, 60_000), startedAt: 42 });
    expect((await read(store, 's2'))?.startedAt).toBe(42);
    await new Promise<void>((resolve) => store.destroy('s2', () => resolve()));
    expect(await read(store, 's2')).toBeNull();
  });

  it('a cached session whose cookie has expired is not served from the cache', async () => {
    const inner = new CountingStore();
    const store = new CachedSessionStore(inner, new SignedInCache(60_000));
    await write(store, 's3', sess(3, 30));
    await read(store, 's3');
    await new Promise((r) => setTimeout(r, 60));
    inner.data.delete('s3'); // what the database store's own expiry check amounts to
    expect(await read(store, 's3')).toBeNull();
    expect(inner.reads).toBe(2);
  });
});

import type { Socket } from 'node:net';
import pg from 'pg';
import type { DataSource } from 'typeorm';
import type { PostgresConnectionOptions } from 'typeorm/driver/postgres/PostgresConnectionOptions.js';

/** The channel the change triggers notify on (migration 1796400000000-change-feed); each payload is a tag. */
const CHANNEL = 'evenhand_changes';
/** A write that marked its tag pending but never committed (rolled back) stops blocking the cache after this. */
const PENDING_MS = 30_000;
const RECONNECT_MS = 1_000;

/**
 * Keeps memory copies of rows that almost every request reads (the signed-in account, a locked run's version) exact.
 * Database triggers NOTIFY a tag (`user:<id>`, `site:<id>`, `runs:<study id>`) when such a row changes, from any
 * process, at commit; the listener drops every copy carrying that tag. A write in this process also marks its tag
 * pending before it commits, so the next request of the same client never sees the old copy even before the
 * notice arrives. While the listening connection is down nothing is cached: every read goes to the database.
 */
export class ChangeFeed {
  /** Bumped by every notice, pending mark and reconnection: a read that started before one is not kept. */
  generation = 0;
  private live = false;
  private client: pg.Client | null = null;
  private readonly pending = new Map<string, number>();
  private readonly caches = new Set<TaggedCache<unknown>>();

  constructor(private readonly db: DataSource) {
    void this.connect();
  }

  /** Whether the listening connection is up (only then is anything kept). */
  get listening(): boolean {
    return this.live;
  }

  /** Whether copies carrying these tags may be kept and served now. */
  usable(tags: readonly string[]): boolean {
    if (!this.live) return false;
    const now = Date.now();
    for (const tag of tags) {
      const until = this.pending.get(tag);
      if (until === undefined) continue;
      if (until > now) return false;
      this.pending.delete(tag);
    }
    return true;
  }

  /** Called by a write of this process before it commits: no copy with this tag is served until its notice arrives. */
  expect(tag: string): void {
    this.pending.set(tag, Date.now() + PENDING_MS);
    this.changed(tag, false);
  }

  register(cache: TaggedCache<unknown>): void {
    this.caches.add(cache);
  }

  private changed(tag: string, notified: boolean): void {
    this.generation++;
    if (notified) this.pending.delete(tag);
    for (const cache of this.caches) cache.drop(tag);
  }

  private down(): void {
    this.live = false;
    this.generation++;
    for (const cache of this.caches) cache.clear();
    const client = this.client;
    this.client = null;
    client?.removeAllListeners();
    client?.on('error', () => undefined);
    void client?.end().catch(() => undefined);
    // A closed data source (shutdown, end of a test) is not reconnected.
    if (this.db.isInitialized) setTimeout(() => void this.connect(), RECONNECT_MS).unref();
  }

  private async connect(): Promise<void> {
    if (!this.db.isInitialized) return;
    const { url, host, port, username, password, database } = this.db.options as PostgresConnectionOptions;
    const client = new pg.Client(url ? { connectionString: url } : { host, port, user: username, password: password as string | undefined, database });
    this.client = client;
    client.on('error', () => this.client === client && this.down());
    client.on('end', () => this.client === client && this.down());
    client.on('notification', (msg) => msg.payload && this.changed(msg.payload, true));
    try {
      await client.connect();
      // The listener alone must not keep the process alive.
      (client as unknown as { connection: { stream: Socket } }).connection.stream.unref();
      await client.query(`LISTEN ${CHANNEL}`);
      // Notices sent while no one listened are lost: start from nothing. From now on every commit is heard, so a
      // write marked before (whose notice may have gone unheard) is covered by its notice or already readable.
      for (const cache of this.caches) cache.clear();
      this.pending.clear();
      this.generation++;
      this.live = true;
    } catch {
      if (this.client === client) this.down();
    }
  }
}

const feeds = new WeakMap<DataSource, ChangeFeed>();

/** The one change feed of a data source (one listening connection per process and database). */
export function changeFeed(db: DataSource): ChangeFeed {
  let feed = feeds.get(db);
  if (!feed) {
    feed = new ChangeFeed(db);
    feeds.set(db, feed);
  }
  return feed;
}

/** A bounded memory cache whose entries carry tags; a change notice for any of an entry's tags drops it. */
export class TaggedCache<V> {
  private readonly entries = new Map<string, { tags: readonly string[]; value: V }>();

  constructor(
    private readonly feed: ChangeFeed,
    private readonly max: number,
  ) {
    feed.register(this as TaggedCache<unknown>);
  }

  /** The kept value if it may be served now, without waiting (so a caller on every request needs no promise). */
  peek(key: string): { readonly value: V } | undefined {
    const hit = this.entries.get(key);
    return hit && this.feed.usable(hit.tags) ? hit : undefined;
  }

  /** The kept value, or a fresh one from `load`, kept if `tagsOf` gives its tags (null: do not keep it). */
  async read(key: string, load: () => Promise<V>, tagsOf: (value: V) => readonly string[] | null): Promise<V> {
    const hit = this.peek(key);
    if (hit) return hit.value;
    const generation = this.feed.generation;
    const value = await load();
    const tags = tagsOf(value);
    // Kept only if nothing changed while it was read, so a copy older than a notice is never kept after it.
    if (tags && this.feed.generation === generation && this.feed.usable(tags)) {
      this.entries.delete(key);
      if (this.entries.size >= this.max) this.entries.delete(this.entries.keys().next().value!);
      this.entries.set(key, { tags, value });
    }
    return value;
  }

  drop(tag: string): void {
    for (const [key, entry] of this.entries) if (entry.tags.includes(tag)) this.entries.delete(key);
  }

  clear(): void {
    this.entries.clear();
  }
}

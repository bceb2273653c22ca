/*
 * A least-recently-used map bounded by the bytes its values hold (and, if asked, by their number):
 * the memory behind the kept pages (page-memo.server.ts) and the kept downloads
 * (download-cache.server.ts). Each value's size is given when it is stored and may grow later.
 */
export class ByteBoundedCache<V> {
  readonly #entries = new Map<string, { value: V; bytes: number }>();
  #bytes = 0;

  constructor(private limits: { maxBytes: number; maxEntries?: number }) {}

  /** The value for `key`, now the most recently used; undefined when not held. */
  get(key: string): V | undefined {
    const entry = this.#entries.get(key);
    if (!entry) return undefined;
    this.#entries.delete(key);
    this.#entries.set(key, entry);
    return entry.value;
  }

  /** The value for `key` without counting it as used. */
  peek(key: string): V | undefined {
    return this.#entries.get(key)?.value;
  }

  /** Holds `value` (replacing what `key` held), then lets the least recently used go past the bounds. */
  set(key: string, value: V, bytes: number): void {
    const old = this.#entries.get(key);
    if (old) this.#bytes -= old.bytes;
    this.#entries.delete(key);
    this.#entries.set(key, { value, bytes });
    this.#bytes += bytes;
    this.#evict();
  }

  /** `value`, still held under `key`, now holds `bytes` more. */
  grow(key: string, value: V, bytes: number): void {
    const entry = this.#entries.get(key);
    if (!entry || entry.value !== value) return;
    entry.bytes += bytes;
    this.#bytes += bytes;
    this.#evict();
  }

  /** New bounds; what is over them goes at once. */
  setLimits(next: Partial<{ maxBytes: number; maxEntries: number }>): void {
    this.limits = { ...this.limits, ...next };
    this.#evict();
  }

  clear(): void {
    this.#entries.clear();
    this.#bytes = 0;
  }

  /** Keys, least recently used first. */
  keys(): string[] {
    return [...this.#entries.keys()];
  }

  get size(): number {
    return this.#entries.size;
  }

  get bytes(): number {
    return this.#bytes;
  }

  #evict(): void {
    const maxEntries = this.limits.maxEntries ?? Infinity;
    for (const [key, entry] of this.#entries) {
      if (this.#bytes <= this.limits.maxBytes && this.#entries.size <= maxEntries) break;
      this.#entries.delete(key);
      this.#bytes -= entry.bytes;
    }
  }
}

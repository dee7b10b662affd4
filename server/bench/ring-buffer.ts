/** The hub's bounded memory of what it sent (hub.ts): the newest entries, oldest evicted first. */

/** Fixed-capacity ring of entries ordered by seq. */
export class RingBuffer<T extends { seq: number }> {
  private readonly items: (T | undefined)[];
  private start = 0;
  private size = 0;

  constructor(readonly capacity: number) {
    this.items = new Array<T | undefined>(capacity);
  }

  push(e: T): void {
    const i = (this.start + this.size) % this.capacity;
    this.items[i] = e;
    if (this.size < this.capacity) this.size++;
    else this.start = (this.start + 1) % this.capacity;
  }

  get length(): number {
    return this.size;
  }

  /** Oldest seq kept, or undefined when empty. */
  get oldestSeq(): number | undefined {
    return this.size ? this.items[this.start]!.seq : undefined;
  }

  /**
   * At most `limit` entries with `since` < seq ≤ `upTo`, oldest first (one page of a resume);
   * undefined when entries after `since` have already been evicted.
   */
  page(since: number, limit: number, upTo = Infinity): T[] | undefined {
    if (this.size === 0) return [];
    if (since < this.items[this.start]!.seq - 1) return undefined;
    let lo = 0;
    let hi = this.size;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.items[(this.start + mid) % this.capacity]!.seq <= since) lo = mid + 1;
      else hi = mid;
    }
    const out: T[] = [];
    for (let k = lo; k < this.size && out.length < limit; k++) {
      const e = this.items[(this.start + k) % this.capacity]!;
      if (e.seq > upTo) break;
      out.push(e);
    }
    return out;
  }
}

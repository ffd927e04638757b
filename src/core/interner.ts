/**
 * Interns strings (labels, words) to small integers so trees are arrays of
 * numbers. One interner per worker: ids are local and never written to disk
 * (hashing works on the strings' UTF-8 bytes, which ids only cache).
 */
const encoder = new TextEncoder();

export class Interner {
  private readonly ids = new Map<string, number>();
  private readonly strings: string[] = [];
  // Open-addressing table over char-code hashes, so the reader can look up
  // a substring without slicing it (hot path: ~60 atoms per tree).
  private slots = new Int32Array(1024).fill(-1);
  private hashes: number[] = [];
  private utf8: (Uint8Array | undefined)[] = [];

  /** The id of `s`, adding it if new. */
  intern(s: string): number {
    let id = this.ids.get(s);
    if (id === undefined) id = this.add(s, hashRange(s, 0, s.length));
    return id;
  }

  /** The id of `text.slice(start, end)`, without slicing when it is known. */
  internRange(text: string, start: number, end: number): number {
    const h = hashRange(text, start, end);
    const mask = this.slots.length - 1;
    const len = end - start;
    for (let k = h & mask; ; k = (k + 1) & mask) {
      const id = this.slots[k];
      if (id < 0) break;
      if (this.hashes[id] !== h) continue;
      const cand = this.strings[id];
      if (cand.length !== len) continue;
      let same = true;
      for (let j = 0; j < len; j++) {
        if (cand.charCodeAt(j) !== text.charCodeAt(start + j)) {
          same = false;
          break;
        }
      }
      if (same) return id;
    }
    const s = text.slice(start, end);
    return this.ids.get(s) ?? this.add(s, h);
  }

  private add(s: string, h: number): number {
    const id = this.strings.length;
    this.ids.set(s, id);
    this.strings.push(s);
    this.hashes.push(h);
    if (this.strings.length * 2 > this.slots.length) this.rehash();
    else this.place(id, h);
    return id;
  }

  private place(id: number, h: number): void {
    const mask = this.slots.length - 1;
    let k = h & mask;
    while (this.slots[k] >= 0) k = (k + 1) & mask;
    this.slots[k] = id;
  }

  private rehash(): void {
    this.slots = new Int32Array(this.slots.length * 2).fill(-1);
    for (let id = 0; id < this.strings.length; id++) this.place(id, this.hashes[id]);
  }

  /** The UTF-8 bytes of string `id`, encoded once and cached (feature keys are built from these). */
  bytes(id: number): Uint8Array {
    let b = this.utf8[id];
    if (b === undefined) {
      b = encoder.encode(this.name(id));
      this.utf8[id] = b;
    }
    return b;
  }

  /** The id of `s`, or -1 if it was never interned. */
  lookup(s: string): number {
    return this.ids.get(s) ?? -1;
  }

  name(id: number): string {
    const s = this.strings[id];
    if (s === undefined) throw new RangeError(`no string with id ${id} (interner holds ${this.strings.length})`);
    return s;
  }

  get size(): number {
    return this.strings.length;
  }
}

/** FNV-1a over UTF-16 code units (table lookups only; never written anywhere). */
function hashRange(text: string, start: number, end: number): number {
  let h = 0x811c9dc5;
  for (let i = start; i < end; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193);
  return h >>> 0;
}

/** The two symbol tables every tree of one run shares. */
export interface Vocabulary {
  readonly labels: Interner;
  readonly words: Interner;
}

export function createVocabulary(): Vocabulary {
  return { labels: new Interner(), words: new Interner() };
}

/** Cuts text into random-sized pieces (seeded) so stream boundaries get tested. */
export function randomChunks(text: string, seed: number, maxSize = 17): string[] {
  let s = seed >>> 0 || 1;
  const rand = (): number => {
    // xorshift32
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 0x100000000;
  };
  const out: string[] = [];
  let i = 0;
  while (i < text.length) {
    const n = 1 + Math.floor(rand() * maxSize);
    out.push(text.slice(i, i + n));
    i += n;
  }
  return out;
}

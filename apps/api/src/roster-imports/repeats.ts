/**
 * Whether any key in a stream of hashed keys may have come before: a Bloom filter of fixed size (2²³ bits, 1 MiB,
 * seven probes by double hashing, the construction of Kirsch and Mitzenmacher, "Less hashing, same performance", 2006;
 * cited from memory). It never misses a repeat. Over n distinct keys it wrongly suspects one with probability about
 * Σ (1 − e^(−7j/2²³))⁷ for j < n: 10⁻⁶ at 50 000 keys, 3·10⁻⁴ at 100 000, 0.05 at 200 000, near 1 at 500 000 (summed
 * numerically); a suspicion only means the exact check runs in SQL, as it always did.
 * A clean export thus skips the grouping passes that look for duplicates, for memory that does not grow with the export.
 */
const BITS = 2 ** 23;
const PROBES = 7;

export class RepeatFilter {
  private readonly words = new Int32Array(BITS / 32);
  /** True once a key was noted whose every bit was already set: it may be a repeat. */
  mayRepeat = false;

  /** Notes a key given as two independent 32-bit hashes of it. */
  note(h1: number, h2: number): void {
    let fresh = false;
    const step = h2 | 1;
    for (let i = 0; i < PROBES; i++) {
      const bit = (h1 + Math.imul(i, step)) & (BITS - 1);
      const mask = 1 << (bit & 31);
      const word = this.words[bit >>> 5];
      if ((word & mask) === 0) {
        fresh = true;
        this.words[bit >>> 5] = word | mask;
      }
    }
    if (!fresh) this.mayRepeat = true;
  }
}

/**
 * A small seeded pseudo-random generator for bootstraps and Monte Carlo runs, so a stored result can
 * be reproduced from its seed. mulberry32 (Tommy Ettinger, public domain, 2017); common practice, no
 * published source. Not for cryptography.
 */
export class Mulberry32 {
  private state: number;
  /** any 32-bit integer seed (other numbers are truncated to one) */
  constructor(seed: number) {
    this.state = seed >>> 0;
  }
  /** the next float, uniform in [0, 1). O(1). */
  next(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }
  /** an integer uniform in [0, n), n ≥ 1. O(1). */
  nextInt(n: number): number {
    return Math.floor(this.next() * n);
  }
}

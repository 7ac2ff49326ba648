// A small seeded PRNG (sfc32, seeded through a string hash), so a seed gives the same dataset on every
// machine and Node version; Math.random() would not.

function hashSeed(text: string): () => number {
  // xmur3: spreads a text seed into well-mixed 32-bit words for the generator state
  let h = 1779033703 ^ text.length
  for (let i = 0; i < text.length; i++) {
    h = Math.imul(h ^ text.charCodeAt(i), 3432918353)
    h = (h << 13) | (h >>> 19)
  }
  return () => {
    h = Math.imul(h ^ (h >>> 16), 2246822507)
    h = Math.imul(h ^ (h >>> 13), 3266489909)
    return (h ^= h >>> 16) >>> 0
  }
}

const HEX = Array.from({ length: 256 }, (_, i) => i.toString(16).padStart(2, '0'))

export class Rng {
  private a: number
  private b: number
  private c: number
  private d: number
  private spare: number | null = null

  constructor(seed: string) {
    const h = hashSeed(seed)
    this.a = h(); this.b = h(); this.c = h(); this.d = h()
    for (let i = 0; i < 12; i++) this.u32() // let the state mix before use
  }

  u32(): number {
    const t = (((this.a + this.b) | 0) + this.d) | 0
    this.d = (this.d + 1) | 0
    this.a = this.b ^ (this.b >>> 9)
    this.b = (this.c + (this.c << 3)) | 0
    this.c = (this.c << 21) | (this.c >>> 11)
    this.c = (this.c + t) | 0
    return t >>> 0
  }

  /** [0, 1) */
  next(): number {
    return this.u32() / 4294967296
  }

  /** 0 … n-1 */
  int(n: number): number {
    return Math.floor(this.next() * n)
  }

  /** lo … hi, both included */
  range(lo: number, hi: number): number {
    return lo + this.int(hi - lo + 1)
  }

  chance(p: number): boolean {
    return this.next() < p
  }

  pick<T>(list: readonly T[]): T {
    return list[this.int(list.length)]!
  }

  /** Box–Muller; the second value of each pair is kept for the next call. */
  normal(mean: number, sd: number): number {
    if (this.spare !== null) {
      const s = this.spare
      this.spare = null
      return mean + sd * s
    }
    let u = 0
    while (u === 0) u = this.next()
    const v = this.next()
    const r = Math.sqrt(-2 * Math.log(u))
    this.spare = r * Math.sin(2 * Math.PI * v)
    return mean + sd * r * Math.cos(2 * Math.PI * v)
  }

  /** Index into `weights` (not necessarily normalised). */
  weighted(weights: readonly number[]): number {
    let total = 0
    for (const w of weights) total += w
    let x = this.next() * total
    for (let i = 0; i < weights.length; i++) {
      x -= weights[i]!
      if (x < 0) return i
    }
    return weights.length - 1
  }

  /** A version-4 UUID from this stream (so re-runs make the same keys). */
  uuid(): string {
    const w = [this.u32(), this.u32(), this.u32(), this.u32()]
    const b = new Array<number>(16)
    for (let i = 0; i < 16; i++) b[i] = (w[i >> 2]! >>> ((i & 3) * 8)) & 0xff
    b[6] = (b[6]! & 0x0f) | 0x40
    b[8] = (b[8]! & 0x3f) | 0x80
    const h = b.map((x) => HEX[x]!)
    return `${h[0]}${h[1]}${h[2]}${h[3]}-${h[4]}${h[5]}-${h[6]}${h[7]}-${h[8]}${h[9]}-${h[10]}${h[11]}${h[12]}${h[13]}${h[14]}${h[15]}`
  }
}

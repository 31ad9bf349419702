// Finished trend rows waiting for the next transaction, in growable typed arrays (no object per row).
export class RowBuffer {
  length = 0;
  level = new Uint8Array(1024);
  series = new Int32Array(1024);
  k = new Float64Array(1024);
  n = new Float64Array(1024);
  power = new Float64Array(1024);
  min = new Float64Array(1024);
  max = new Float64Array(1024);
  /** Sample span the buffered rows cover (for the record of what could not be stored). */
  firstSample = Infinity;
  lastSample = -Infinity;

  push(
    level: number,
    series: number,
    k: number,
    n: number,
    power: number,
    min: number,
    max: number,
    from: number,
    to: number,
  ): void {
    if (this.length === this.level.length) this.grow();
    const i = this.length++;
    this.level[i] = level;
    this.series[i] = series;
    this.k[i] = k;
    this.n[i] = n;
    this.power[i] = power;
    this.min[i] = min;
    this.max[i] = max;
    if (from < this.firstSample) this.firstSample = from;
    if (to > this.lastSample) this.lastSample = to;
  }

  clear(): void {
    this.length = 0;
    this.firstSample = Infinity;
    this.lastSample = -Infinity;
  }

  private grow(): void {
    const size = this.level.length * 2;
    const g = <T extends Uint8Array | Int32Array | Float64Array>(a: T, make: new (n: number) => T): T => {
      const b = new make(size);
      b.set(a);
      return b;
    };
    this.level = g(this.level, Uint8Array);
    this.series = g(this.series, Int32Array);
    this.k = g(this.k, Float64Array);
    this.n = g(this.n, Float64Array);
    this.power = g(this.power, Float64Array);
    this.min = g(this.min, Float64Array);
    this.max = g(this.max, Float64Array);
  }
}

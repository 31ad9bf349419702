// fft.js ships no types; the one module that uses it (dsp/rfft.ts) narrows these further.
declare module 'fft.js' {
  export default class FFT {
    constructor(size: number);
    readonly size: number;
    createComplexArray(): number[];
    realTransform(output: ArrayLike<number> & { [i: number]: number }, input: ArrayLike<number>): void;
    completeSpectrum(spectrum: ArrayLike<number> & { [i: number]: number }): void;
    transform(output: ArrayLike<number> & { [i: number]: number }, input: ArrayLike<number>): void;
    inverseTransform(output: ArrayLike<number> & { [i: number]: number }, input: ArrayLike<number>): void;
  }
}

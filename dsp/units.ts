// Decibel conversions. Power-like quantities (PSD, mean square) take 10·log10, amplitude-like ones (RMS, ASD)
// 20·log10 (IEC 60027-3 / common practice).

/** 10·log10 of a power ratio. */
export function powerRatioDb(ratio: number): number {
  return 10 * Math.log10(ratio);
}

/** 20·log10 of an amplitude ratio. */
export function amplitudeRatioDb(ratio: number): number {
  return 20 * Math.log10(ratio);
}

/** Inverse of powerRatioDb. */
export function dbToPowerRatio(db: number): number {
  return 10 ** (db / 10);
}

/** Inverse of amplitudeRatioDb. */
export function dbToAmplitudeRatio(db: number): number {
  return 10 ** (db / 20);
}

/** A density in V²/Hz as dBV/√Hz re 1 V/√Hz: 10·log10(psd) = 20·log10(asd). */
export function psdToDbvPerRootHz(psdV2PerHz: number): number {
  return 10 * Math.log10(psdV2PerHz);
}

/** An RMS voltage as dBV re 1 V rms. */
export function rmsToDbv(rmsVolts: number): number {
  return 20 * Math.log10(rmsVolts);
}

/**
 * The factor on a mean square (or a PSD) at the ADC whose 10·log10 is the level in dBFS: 0 dBFS is the RMS of a
 * sine whose peak just reaches full scale (AES17 convention), FS/√2, so the factor is 2/FS².
 */
export function dbfsPowerScale(fullScalePeak: number): number {
  if (!(Number.isFinite(fullScalePeak) && fullScalePeak > 0)) {
    throw new RangeError(`dBFS: full scale must be a positive peak value, got ${fullScalePeak}`);
  }
  return 2 / (fullScalePeak * fullScalePeak);
}

/**
 * An RMS level in dBFS (AES17): 20·log10(rms·√2 / fullScalePeak). A full-scale square wave therefore reads
 * +3.01 dBFS. A density at the ADC in unit/√Hz gives dBFS/√Hz the same way.
 */
export function rmsToDbfs(rms: number, fullScalePeak: number): number {
  return powerRatioDb(rms * rms * dbfsPowerScale(fullScalePeak));
}

/** The factor on a mean square (or a PSD) at the ADC that expresses it in converter steps squared: 1/lsb². */
export function lsbPowerScale(lsb: number): number {
  if (!(Number.isFinite(lsb) && lsb > 0)) {
    throw new RangeError(`LSB: the converter step must be a positive number of units per count, got ${lsb}`);
  }
  return 1 / (lsb * lsb);
}

/** An RMS value (or a density, unit/√Hz) at the ADC in converter steps: LSB rms (or LSB/√Hz). */
export function rmsToLsb(rms: number, lsb: number): number {
  return Math.sqrt(rms * rms * lsbPowerScale(lsb));
}

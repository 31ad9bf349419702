#!/usr/bin/env python3
"""Writes the test recordings for tests/baseline into DIR (scipy.io.wavfile, float32) and prints, as JSON, the
scipy.signal.welch reference of the quiet one (Hann, 1024, 50 %, detrend constant, density) and of the two
halves of the drifting one.

usage: make-recordings.py DIR
  quiet.wav   40 s of white noise, 1 µV rms at 4 kS/s (numpy default_rng(5))
  drift.wav   the same length whose floor is 1 dB higher in the second half
  tone.wav    quiet floor plus a 2 µV rms line at 700.3 Hz from t = 20 s
"""
import json
import sys

import numpy as np
from scipy import signal
from scipy.io import wavfile

FS = 4000
out = sys.argv[1]
rng = np.random.default_rng(5)
n = FS * 40
quiet = 1e-6 * rng.standard_normal(n)
wavfile.write(f"{out}/quiet.wav", FS, quiet.astype(np.float32))
drift = 1e-6 * rng.standard_normal(n)
drift[n // 2:] *= 10 ** (1 / 20)
wavfile.write(f"{out}/drift.wav", FS, drift.astype(np.float32))
t = np.arange(n) / FS
tone = 1e-6 * rng.standard_normal(n)
tone[FS * 20:] += 2e-6 * np.sqrt(2) * np.sin(2 * np.pi * 700.3 * t[FS * 20:])
wavfile.write(f"{out}/tone.wav", FS, tone.astype(np.float32))

x = quiet.astype(np.float32).astype(np.float64)
f, p = signal.welch(x, fs=FS, window="hann", nperseg=1024, noverlap=512, detrend="constant", scaling="density")
segments = (n - 1024) // 512 + 1
band = (f >= 100) & (f <= 1000)
# Drift reference: scipy.signal.welch of each half of drift.wav, whole usable band (bins 3 … 511, 11.72 … 1996.09 Hz), in dB.
y = drift.astype(np.float32).astype(np.float64)
_, p1 = signal.welch(y[:n // 2], fs=FS, window="hann", nperseg=1024, noverlap=512, detrend="constant")
_, p2 = signal.welch(y[n // 2:], fs=FS, window="hann", nperseg=1024, noverlap=512, detrend="constant")
drift_db = float(10 * np.log10(p2[3:512].sum() / p1[3:512].sum()))
print(json.dumps({"psd": p.tolist(), "segments": segments, "band_100_1000_rms": float(np.sqrt(p[band].sum() * (f[1] - f[0]))),
                  "drift_db": drift_db}))

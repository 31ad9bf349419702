"""Writes the browser tests' recordings (our own invented bench, seeded so every run is identical):
fault.wav -- 40 s, 2 channels at 8 kS/s, white floors of 1.0 and 1.5 uV RMS (ch0, ch1), and from t = 20 s the
floor of ch1 rises by 4x in power (6 dB) in 200-1500 Hz.
IEEE float32 samples in volts (scipy.io.wavfile writes format 3 for float32 arrays).
Usage: python3 make_rig_recording.py OUTDIR
"""
import sys
import numpy as np
from scipy.io import wavfile
from scipy.signal import butter, sosfilt

fs = 8000
out = sys.argv[1]
rng = np.random.default_rng(20261201)


def floors(n):
    return np.stack([rng.normal(0, 1.0e-6, n), rng.normal(0, 1.5e-6, n)], axis=1)


n = 40 * fs
x = floors(n)
sos = butter(6, [200, 1500], btype="bandpass", fs=fs, output="sos")
# Added band noise of sqrt(3) x the in-band floor RMS makes the in-band power 4x (+6.0 dB).
inband = np.sqrt((1500 - 200) / (fs / 2)) * 1.5e-6
extra = sosfilt(sos, rng.normal(0, 1, n))
extra *= np.sqrt(3) * inband / np.std(extra)
x[20 * fs:, 1] += extra[20 * fs:]
wavfile.write(f"{out}/fault.wav", fs, x.astype(np.float32))

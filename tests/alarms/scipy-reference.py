#!/usr/bin/env python3
"""Reference values from numpy/scipy for the alarm tests. One JSON object on stdout per call.

usage: scipy-reference.py COMMAND < JSON_ARGS
  quantiles   {"f": [[p, d1, d2], ...], "chi2": [[p, k], ...]}  -> scipy.stats.f.ppf / chi2.ppf
  band-mc     {"seed", "trials", "segment", "segments", "bands": [[lo, hi], ...], "threshold": [ratio per band]}
              -> per band: mean and variance of the band sum of scipy.signal.welch (Hann, no overlap) of white
                 noise, and how often the ratio of two independent estimates exceeded the given threshold
  median      {"x": [...], "h": H} -> running median with a truncated window at the edges (numpy.median)
  tone-psd    {"fs", "n", "segment", "freq", "rms", "noise", "seed", "window"} -> scipy.signal.welch density
  welch       {"x", "fs", "segment"} -> scipy.signal.welch density (Hann, 50 %, detrend constant)
  batch       [[COMMAND, ARGS], ...] -> list of answers (one python start for many references)
"""
import json
import sys

import numpy as np
from scipy import signal, stats


def quantiles(a):
    return {
        "f": [float(stats.f.ppf(p, d1, d2)) for p, d1, d2 in a.get("f", [])],
        "chi2": [float(stats.chi2.ppf(p, k)) for p, k in a.get("chi2", [])],
    }


def band_mc(a):
    rng = np.random.default_rng(a["seed"])
    n = a["segment"] * a["segments"]
    trials = a["trials"]
    _, p = signal.welch(rng.standard_normal((2 * trials, n)), fs=1.0, window="hann", nperseg=a["segment"],
                        noverlap=0, detrend="constant", scaling="density", axis=-1)
    s = np.array([p[:, lo:hi + 1].sum(axis=1) for lo, hi in a["bands"]]).T
    out = []
    for b in range(len(a["bands"])):
        col = s[:, b]
        ratio = col[:trials] / col[trials:]
        out.append({"mean": float(col.mean()), "var": float(col.var(ddof=1)),
                    "exceed": int((ratio > a["threshold"][b]).sum())})
    return {"bands": out}


def median(a):
    x = np.asarray(a["x"], dtype=float)
    h = a["h"]
    return {"y": [float(np.median(x[max(0, k - h):k + h + 1])) for k in range(len(x))]}


def tone_psd(a):
    rng = np.random.default_rng(a["seed"])
    t = np.arange(a["n"]) / a["fs"]
    x = a["rms"] * np.sqrt(2) * np.sin(2 * np.pi * a["freq"] * t + 0.3) + a["noise"] * rng.standard_normal(a["n"])
    f, p = signal.welch(x, fs=a["fs"], window=a["window"], nperseg=a["segment"], noverlap=a["segment"] // 2,
                        detrend="constant", scaling="density")
    return {"f": f.tolist(), "psd": p.tolist()}


def welch(a):
    f, p = signal.welch(np.asarray(a["x"], dtype=float), fs=a["fs"], window="hann", nperseg=a["segment"],
                        noverlap=a["segment"] // 2, detrend="constant", scaling="density")
    return {"psd": p.tolist()}


def batch(a):
    return [COMMANDS[c](args) for c, args in a]


COMMANDS = {"quantiles": quantiles, "band-mc": band_mc, "median": median, "tone-psd": tone_psd, "welch": welch, "batch": batch}

if __name__ == "__main__":
    print(json.dumps(COMMANDS[sys.argv[1]](json.load(sys.stdin))))

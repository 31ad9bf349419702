"""Reference spectra for the pipeline tests: scipy.signal.welch (average='mean') over pieces of a recording.

stdin: JSON {"path": raw little-endian float64 file, "channels": C, "frames": N, "fs": rate, "nperseg": n,
             "noverlap": m, "window": "hann", "detrend": "constant"|False, "cases": [[[a, b], ...], ...],
             "scale": [unit per count per channel], "fround": true}
The file holds N frames interleaved by channel. Each channel is scaled (and rounded to float32 when fround),
each piece [a, b) is given to scipy.signal.welch on its own, and the per-piece means are combined weighted by
their segment counts: the mean over every segment of every piece.
stdout: JSON [{"psd": [[...] per channel], "segments": K} per case]
"""
import json
import sys

import numpy as np
from scipy import signal

args = json.load(sys.stdin)
raw = np.fromfile(args["path"], dtype="<f8").reshape(args["frames"], args["channels"])
nperseg, noverlap = args["nperseg"], args["noverlap"]
step = nperseg - noverlap
xs = []
for c in range(args["channels"]):
    x = raw[:, c] * args["scale"][c]
    if args.get("fround"):
        x = x.astype(np.float32).astype(np.float64)
    xs.append(x)


def case(pieces, x):
    acc = None
    k_all = 0
    for a, b in pieces:
        n = b - a
        if n < nperseg:
            continue
        k = (n - nperseg) // step + 1
        _, p = signal.welch(x[a:b], fs=args["fs"], window=args["window"], nperseg=nperseg, noverlap=noverlap,
                            detrend=args["detrend"], scaling="density", average="mean")
        acc = p * k if acc is None else acc + p * k
        k_all += k
    return (acc / k_all).tolist(), k_all


answers = []
for pieces in args["cases"]:
    results = [case(pieces, x) for x in xs]
    answers.append({"psd": [r[0] for r in results], "segments": results[0][1]})
json.dump(answers, sys.stdout)

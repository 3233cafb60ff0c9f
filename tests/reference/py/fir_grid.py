"""Worst deviation of each render FIR from the analog curve after removing
its integer delay. The FIR response comes from scipy.signal.freqz on a
uniform grid of 8 x taps points over 0..fs/2 (FFT path); the analog response
from freqs_zpk built here from the time constants."""
import json, sys, os
import numpy as np
from scipy import signal
from curve_model import analog_response

inp = json.load(open(sys.argv[1]))
taps_all = np.fromfile(os.path.join(sys.argv[3], "taps.f64"), dtype="<f8")
out = []
for c in inp["curves"]:
    taps = taps_all[c["offset"]:c["offset"] + c["length"]]
    fs, d = c["fs"], c["delay"]
    n = 8 * len(taps)
    f, h = signal.freqz(taps, 1, worN=n, fs=fs)
    sel = (f >= 20.0) & (f <= 20000.0)
    f, h = f[sel], h[sel]
    h = h * np.exp(1j * 2 * np.pi * f * d / fs)
    ratio = h / analog_response(c, f)
    out.append({
        "maxErrorDb": float(np.max(np.abs(20 * np.log10(np.abs(ratio))))),
        "maxPhaseErrorDeg": float(np.max(np.abs(np.degrees(np.angle(ratio))))),
        "points": int(sel.sum()),
    })
json.dump(out, open(sys.argv[2], "w"))

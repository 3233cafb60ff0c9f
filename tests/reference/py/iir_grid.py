"""Worst deviation of each IIR cascade (sosfreqz) from the analog curve
(freqs_zpk, built here from the time constants) on a dense log grid:
20 Hz-20 kHz, and 20 Hz-max(20 kHz, 0.45 fs)."""
import json, sys
import numpy as np
from scipy import signal
from curve_model import analog_response

inp = json.load(open(sys.argv[1]))
points = inp["points"]
out = []
for c in inp["curves"]:
    fs = c["fs"]
    res = {}
    for key, hi in (("narrow", 20000.0), ("wide", max(20000.0, 0.45 * fs))):
        hz = np.geomspace(20.0, hi, points)
        ha = analog_response(c, hz)
        _, hd = signal.sosfreqz(np.asarray(c["sos"]), worN=hz, fs=fs)
        ratio = hd / ha
        res[key] = {
            "maxErrorDb": float(np.max(np.abs(20 * np.log10(np.abs(ratio))))),
            "maxPhaseErrorDeg": float(np.max(np.abs(np.degrees(np.angle(ratio))))),
        }
    out.append(res)
json.dump(out, open(sys.argv[2], "w"))

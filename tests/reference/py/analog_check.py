"""Analog response of each curve by scipy.signal.freqs (polynomial form) and
by freqs_zpk, and the digital sections by sosfreqz at given frequencies."""
import json, sys
import numpy as np
from scipy import signal
from curve_model import zpk_from_taus, analog_response

inp = json.load(open(sys.argv[1]))
out = []
for c in inp["curves"]:
    hz = np.asarray(c["hz"], dtype=float)
    h = analog_response(c, hz)
    z, p, k = zpk_from_taus(c)
    b, a = signal.zpk2tf(z, p, k)
    _, h2 = signal.freqs(b, a, worN=2 * np.pi * hz)
    item = {
        "db": (20 * np.log10(np.abs(h))).tolist(),
        "deg": np.degrees(np.angle(h)).tolist(),
        "dbPoly": (20 * np.log10(np.abs(h2))).tolist(),
        "zeros": sorted(z.tolist()),
        "poles": sorted(p.tolist()),
        "k": k,
    }
    if c.get("sos"):
        _, hd = signal.sosfreqz(np.asarray(c["sos"]), worN=hz, fs=c["fs"])
        item["sosDb"] = (20 * np.log10(np.abs(hd))).tolist()
        item["sosDeg"] = np.degrees(np.angle(hd)).tolist()
    out.append(item)
json.dump(out, open(sys.argv[2], "w"))

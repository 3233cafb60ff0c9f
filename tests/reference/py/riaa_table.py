"""RIAA playback gain relative to 1 kHz from the IEC 60098 time constants
(3180, 318, 75 us), by scipy.signal.freqs on the polynomial form
H(s) = (1 + s*318e-6) / ((1 + s*3180e-6)(1 + s*75e-6))."""
import json, sys
import numpy as np
from scipy import signal

inp = json.load(open(sys.argv[1]))
t1, t2, t3 = 3180e-6, 318e-6, 75e-6
b = [t2, 1.0]
a = np.polymul([t1, 1.0], [t3, 1.0])
hz = np.asarray(inp["hz"] + [1000.0], dtype=float)
_, h = signal.freqs(b, a, worN=2 * np.pi * hz)
db = 20 * np.log10(np.abs(h))
json.dump({"db": (db[:-1] - db[-1]).tolist()}, open(sys.argv[2], "w"))

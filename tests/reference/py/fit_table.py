"""A RIAA playback table from the IEC 60098 time constants (scipy.signal.freqs),
relative to 1 kHz, rounded to 0.01 dB like printed tables."""
import json, sys
import numpy as np
from scipy import signal

inp = json.load(open(sys.argv[1]))
b = [318e-6, 1.0]
a = np.polymul([3180e-6, 1.0], [75e-6, 1.0])
hz = np.asarray(inp["hz"] + [1000.0], dtype=float)
_, h = signal.freqs(b, a, worN=2 * np.pi * hz)
db = 20 * np.log10(np.abs(h))
json.dump({"db": np.round(db[:-1] - db[-1], 2).tolist()}, open(sys.argv[2], "w"))

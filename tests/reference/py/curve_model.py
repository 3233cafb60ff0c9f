"""The curve model of DESIGN.md built independently with scipy.signal.

H(s) = K (1 + s tt)(1 + s tu) / ((1 + s ts)(1 + s tr)) * s th / (1 + s th)
Zeros at -1/tau (and 0 for the high-pass), poles at -1/tau; K normalises the
gain at the reference frequency. Time constants arrive in microseconds.
"""
import numpy as np
from scipy import signal


def zpk_from_taus(c):
    us = 1e-6
    zeros, poles, k = [], [], 1.0
    for name in ("turnover", "ultrasonic"):
        t = c.get(name)
        if t:
            zeros.append(-1.0 / (t * us))
            k *= t * us
    for name in ("shelf", "rolloff", "highpass"):
        t = c.get(name)
        if t:
            poles.append(-1.0 / (t * us))
            k /= t * us
    # No shelf under a turnover means an integrator 1/s, which the high-pass's s
    # cancels; otherwise the high-pass keeps its zero at DC.
    integrator = bool(c.get("turnover")) and not c.get("shelf")
    if c.get("highpass") and not integrator:
        zeros.append(0.0)
        k *= c["highpass"] * us
    ref_hz = c.get("refHz", 1000.0)
    ref_db = c.get("refDb", 0.0)
    _, h = signal.freqs_zpk(zeros, poles, k, worN=[2 * np.pi * ref_hz])
    k *= 10 ** (ref_db / 20) / abs(h[0])
    return np.array(zeros), np.array(poles), k


def analog_response(c, hz):
    z, p, k = zpk_from_taus(c)
    _, h = signal.freqs_zpk(z, p, k, worN=2 * np.pi * np.asarray(hz, dtype=float))
    return h

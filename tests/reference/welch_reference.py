#!/usr/bin/python3
"""Reference Welch spectra from SciPy, for Spinward's estimator tests.

Usage: welch_reference.py INPUT OUTPUT PARAMS_JSON
  INPUT   the signal as raw little-endian float64
  OUTPUT  where the spectrum is written, raw little-endian float64, in SciPy's bin order
          (two-sided spectra in FFT order, as numpy.fft.fftfreq)
  PARAMS_JSON  {"fs", "nperseg", "noverlap", "nfft", "window", "kaiser_beta", "symmetric",
                "detrend": "constant"|"linear"|"none", "scaling", "onesided", "average":
                "mean"|"median"|"exponential"|"peak", "tau"}
Prints one JSON line: {"bins": ..., "segments": ..., "scipy": version}.

Usage: welch_reference.py window OUTPUT WINDOWS_JSON
  WINDOWS_JSON  a list of {"window", "kaiser_beta", "symmetric", "nperseg"}
  OUTPUT  scipy.signal.get_window of each, concatenated, raw little-endian float64

'mean' and 'median' come straight from scipy.signal.welch. SciPy has no exponential or peak-hold
average, so those take the per-segment periodograms of scipy.signal.spectrogram(mode='psd') (the
same segments, detrending, window, scaling and one-sided doubling as welch) and combine them here:
exponential by avg_k = avg_{k-1} + a (P_k - avg_{k-1}), a = 1 - exp(-hop / (fs tau)), started at
P_0; peak-hold by the maximum per bin.
Any failure exits non-zero with the reason on stderr, so the calling test fails.
"""
import json
import math
import sys

import numpy as np
import scipy
import scipy.signal


def window_for(params):
    name = params.get("window", "hann")
    n = int(params["nperseg"])
    spec = ("kaiser", float(params["kaiser_beta"])) if name == "kaiser" else name
    # get_window(..., fftbins=True) is the periodic form, fftbins=False the symmetric one.
    return scipy.signal.get_window(spec, n, fftbins=not params.get("symmetric", False))


def windows(argv):
    out = [window_for(params) for params in json.loads(argv[3])]
    np.ascontiguousarray(np.concatenate(out), dtype="<f8").tofile(argv[2])
    print(json.dumps({"windows": len(out), "scipy": scipy.__version__}))
    return 0


def main(argv):
    if len(argv) == 4 and argv[1] == "window":
        return windows(argv)
    if len(argv) != 4:
        sys.stderr.write(__doc__)
        return 2
    x = np.fromfile(argv[1], dtype="<f8")
    params = json.loads(argv[3])
    fs = float(params["fs"])
    nperseg = int(params["nperseg"])
    noverlap = int(params["noverlap"])
    nfft = int(params.get("nfft", nperseg))
    detrend = params.get("detrend", "constant")
    detrend = False if detrend == "none" else detrend
    scaling = params.get("scaling", "density")
    onesided = bool(params.get("onesided", True))
    average = params.get("average", "mean")
    win = window_for(params)
    common = dict(fs=fs, window=win, nperseg=nperseg, noverlap=noverlap, nfft=nfft,
                  detrend=detrend, return_onesided=onesided, scaling=scaling)
    segments = (len(x) - noverlap) // (nperseg - noverlap)
    if average in ("mean", "median"):
        _, p = scipy.signal.welch(x, average=average, **common)
    elif average in ("exponential", "peak"):
        _, _, sxx = scipy.signal.spectrogram(x, mode="psd", **common)
        if sxx.shape[-1] != segments:
            raise RuntimeError(f"spectrogram gave {sxx.shape[-1]} segments, expected {segments}")
        if average == "peak":
            p = sxx.max(axis=-1)
        else:
            hop = nperseg - noverlap
            a = 1.0 - math.exp(-hop / (fs * float(params["tau"])))
            p = sxx[:, 0].copy()
            for k in range(1, sxx.shape[-1]):
                p = p + a * (sxx[:, k] - p)
    else:
        raise ValueError(f"unknown average {average!r}")
    p = np.ascontiguousarray(p, dtype="<f8")
    p.tofile(argv[2])
    print(json.dumps({"bins": int(p.size), "segments": int(segments),
                      "scipy": scipy.__version__}))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))

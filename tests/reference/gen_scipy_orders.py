#!/usr/bin/env python3
"""Generate minimum-order reference data for Bandwright's spec masks with scipy.signal.

Run from the repository root:

    python3 tests/reference/gen_scipy_orders.py

It writes tests/reference/data/scipy_orders.json (next to this script, whatever the working directory).
The output depends only on the SciPy/NumPy/Python versions, which are written into the file; keys are
sorted and floats use Python's shortest round-trip repr, so a rerun with the same versions gives the
same bytes.

Sources (the independent oracle for bandwright::mask::minimum_order):
  - scipy.signal.buttord(wp, ws, gpass, gstop, analog=True)   Butterworth minimum order and natural
                                                              frequency wn (rad/s)
  - scipy.signal.cheb1ord(wp, ws, gpass, gstop, analog=True)  Chebyshev type I minimum order and wn
                                                              (rad/s); its design has ripple = gpass

The masks are analog low-pass masks drawn with a fixed seed (numpy.random.default_rng(SEED)):
  - passband edge f_p log-uniform in [10 Hz, 100 kHz]; wp = 2*pi*f_p (rad/s, as scipy's analog
    functions take it);
  - stopband ratio ws/wp log-uniform in [1.1, 20];
  - passband loss gpass uniform in [0.1, 3] dB, stopband attenuation gstop uniform in [20, 100] dB.
scipy may return orders above 8; the data keeps them as scipy gave them.
"""

import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
import scipy.signal as signal

GENERATOR = "tests/reference/gen_scipy_orders.py"
OUT_PATH = Path(__file__).resolve().parent / "data" / "scipy_orders.json"

SEED = 20261202
N_MASKS = 200


def main():
    rng = np.random.default_rng(SEED)
    masks = []
    for index in range(N_MASKS):
        passband_edge_hz = float(10.0 ** rng.uniform(1.0, 5.0))
        ratio = float(10.0 ** rng.uniform(math.log10(1.1), math.log10(20.0)))
        gpass = float(rng.uniform(0.1, 3.0))
        gstop = float(rng.uniform(20.0, 100.0))
        wp = 2.0 * math.pi * passband_edge_hz
        ws = wp * ratio
        butter_order, butter_wn = signal.buttord(wp, ws, gpass, gstop, analog=True)
        cheb_order, cheb_wn = signal.cheb1ord(wp, ws, gpass, gstop, analog=True)
        masks.append(
            {
                "index": index,
                "passband_edge_hz": passband_edge_hz,
                "stopband_edge_hz": ws / (2.0 * math.pi),
                "wp_rad_s": wp,
                "ws_rad_s": ws,
                "gpass_db": gpass,
                "gstop_db": gstop,
                "buttord_order": int(butter_order),
                "buttord_wn_rad_s": float(butter_wn),
                "cheb1ord_order": int(cheb_order),
                "cheb1ord_wn_rad_s": float(cheb_wn),
            }
        )
    data = {
        "generator": GENERATOR,
        "seed": SEED,
        "scipy_version": scipy.__version__,
        "numpy_version": np.__version__,
        "python_version": platform.python_version(),
        "masks": masks,
    }
    OUT_PATH.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps(data, sort_keys=True, indent=1, allow_nan=False) + "\n"
    OUT_PATH.write_text(text)
    above = sum(1 for m in masks if m["buttord_order"] > 8)
    print(f"wrote {len(masks)} masks to {OUT_PATH} ({above} with a Butterworth order above 8)")
    print(f"scipy {scipy.__version__}, numpy {np.__version__}, python {platform.python_version()}")


if __name__ == "__main__":
    main()

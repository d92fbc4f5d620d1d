#!/usr/bin/env python3
"""Writes tests/reference/vi_cases.csv: viscosity index cases computed by the PyPI package
`chemicals` (`chemicals.viscosity.viscosity_index`, inputs in m2/s, ASTM D2270).

The (KV40, KV100) pairs span KV100 2-100 mm2/s and VI about 40-160. Each pair is built by
aiming at a VI on a KV100 and rounding KV40 to two decimals, as a lab reports it; the VI in
the file is then what `chemicals` computes for the rounded pair, not the aim.
KV100 = 70.0 exactly is left out: D2270 uses Table 1 there, `chemicals` switches to the
formulas at 70.0, and the two differ slightly.

Run from the repository root:  python3 tests/reference/make_vi_cases.py
Needs:  pip install chemicals
"""
import math
import pathlib

import chemicals
from chemicals.viscosity import VI_Hs, VI_Ls, VI_nus, viscosity_index
from fluids.numerics import interp

OUT = pathlib.Path(__file__).resolve().parent / "vi_cases.csv"

KV100S = [2.0, 2.35, 3.1, 4.0, 4.45, 5.05, 6.8, 8.86, 10.7, 12.25, 14.3, 16.9, 19.95, 20.0,
          24.7, 29.9, 33.3, 45.0, 55.55, 62.5, 69.95, 72.0, 85.0, 100.0]
AIMS = [40, 55, 70, 85, 95, 100, 105, 120, 135, 150, 160]


def l_h(kv100: float) -> tuple[float, float]:
    if kv100 < 70.0:
        return interp(kv100, VI_nus, VI_Ls), interp(kv100, VI_nus, VI_Hs)
    return (0.8353 * kv100 + 14.67) * kv100 - 216.0, (0.1684 * kv100 + 11.85) * kv100 - 97.0


def kv40_for(kv100: float, aim: float) -> float:
    l, h = l_h(kv100)
    if aim <= 100:
        return l - aim / 100.0 * (l - h)
    n = math.log10((aim - 100.0) * 0.00715 + 1.0)
    return h / kv100 ** n


def main() -> None:
    rows = []
    for i, kv100 in enumerate(KV100S):
        for aim in (AIMS[i % len(AIMS)], AIMS[(i + 5) % len(AIMS)]):
            kv40 = round(kv40_for(kv100, aim), 2)
            vi = viscosity_index(kv40 * 1e-6, kv100 * 1e-6)
            # Python's round() rounds half to even, as D2270 asks. chemicals' own rounding=True
            # is not used: in 1.5.2 it turns a whole number into the one below (95.0 -> 94).
            vi_rounded = round(vi)
            rows.append((kv40, kv100, vi, vi_rounded))
    lines = [
        f"# ASTM D2270 viscosity index by PyPI package chemicals {chemicals.__version__}: "
        "chemicals.viscosity.viscosity_index(kv40*1e-6, kv100*1e-6) (m2/s).",
        "# vi_rounded: Python round() of vi (half to even). "
        "Written by tests/reference/make_vi_cases.py; do not edit by hand.",
        "kv40_cst,kv100_cst,vi,vi_rounded",
    ]
    lines += [f"{a!r},{b!r},{c!r},{d}" for a, b, c, d in rows]
    OUT.write_text("\n".join(lines) + "\n", encoding="utf-8")
    vis = [r[2] for r in rows]
    print(f"wrote {len(rows)} cases to {OUT}; VI {min(vis):.1f}..{max(vis):.1f}")


if __name__ == "__main__":
    main()

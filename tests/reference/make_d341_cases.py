#!/usr/bin/env python3
"""Writes tests/reference/d341_cases.csv: viscosity-temperature values by ASTM D341-09.

No published worked example was at hand, so this is an independent implementation of the
standard's equations with numpy, kept apart from the Rust code:
    log10(log10(Z)) = A - B*log10(T),  T in kelvin
    Z  = nu + 0.7 + exp(-1.47 - 1.84*nu - 0.51*nu**2)                      (nu in mm2/s)
    nu = (Z - 0.7) - exp(-0.7487 - 3.295*(Z-0.7) + 0.6119*(Z-0.7)**2 - 0.3193*(Z-0.7)**3)
A and B come from the fluid's KV40 and KV100. Rows of kind `at` give nu at a temperature;
rows of kind `kv40` give the KV40 equivalent of a reading (nu_reading at t_reading) by a line
of the fluid's slope B through the reading.

Run from the repository root:  python3 tests/reference/make_d341_cases.py
Needs:  pip install numpy
"""
import pathlib

import numpy as np

OUT = pathlib.Path(__file__).resolve().parent / "d341_cases.csv"
K0 = 273.15

# (KV40, KV100) of typical new hydraulic and gear oils, mm2/s.
FLUIDS = [(22.0, 4.4), (32.0, 5.4), (46.0, 6.8), (68.0, 8.7), (100.0, 11.1), (150.0, 14.7),
          (7.6, 2.1), (46.0, 8.4)]
TEMPS_C = [-10.0, 0.0, 20.0, 25.0, 50.0, 60.0, 80.0, 120.0, 150.0]
# Field readings (cSt, degC) as a VG 46 oil would give them; scaled by KV40/46 for each fluid.
READINGS = [(30.0, 55.0), (60.0, 25.0), (12.0, 80.0)]


def z_of(nu):
    return nu + 0.7 + np.exp(-1.47 - 1.84 * nu - 0.51 * nu ** 2)


def nu_of(z):
    w = z - 0.7
    return w - np.exp(-0.7487 - 3.295 * w + 0.6119 * w ** 2 - 0.3193 * w ** 3)


def fit(kv40, kv100):
    t1, t2 = np.log10(K0 + 40.0), np.log10(K0 + 100.0)
    y1, y2 = np.log10(np.log10(z_of(kv40))), np.log10(np.log10(z_of(kv100)))
    b = (y1 - y2) / (t2 - t1)
    a = y1 + b * t1
    return a, b


def nu_at(a, b, t_c):
    return nu_of(10.0 ** (10.0 ** (a - b * np.log10(K0 + t_c))))


def main() -> None:
    lines = [
        f"# ASTM D341-09 equations, independent numpy {np.__version__} implementation "
        "(see tests/reference/make_d341_cases.py); no published worked example used.",
        "# kind=at: nu_cst at t_c; kind=kv40: KV40 equivalent nu_cst of reading_cst at t_c. "
        "Do not edit by hand.",
        "kind,kv40_cst,kv100_cst,t_c,reading_cst,nu_cst",
    ]
    for kv40, kv100 in FLUIDS:
        a, b = fit(kv40, kv100)
        for t in TEMPS_C:
            lines.append(f"at,{kv40!r},{kv100!r},{t!r},,{float(nu_at(a, b, t))!r}")
        for frac, t in READINGS:
            reading = round(kv40 * frac / 46.0, 2)
            a_r = np.log10(np.log10(z_of(reading))) + b * np.log10(K0 + t)
            kv40_eq = float(nu_at(a_r, b, 40.0))
            lines.append(f"kv40,{kv40!r},{kv100!r},{t!r},{reading!r},{kv40_eq!r}")
    OUT.write_text("\n".join(lines) + "\n", encoding="utf-8")
    print(f"wrote {len(lines) - 3} cases to {OUT}")


if __name__ == "__main__":
    main()

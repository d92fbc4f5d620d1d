#!/usr/bin/env python3
"""Writes src/physics/d2270_table.csv: ASTM D2270 Table 1 (L and H against KV100, 2-70 mm2/s).

The values are the standard's published figures as carried by the PyPI package `chemicals`
(`chemicals.viscosity.VI_nus`, `VI_Ls`, `VI_Hs`). sumpbook reads the file with include_str!.

Run from the repository root:  python3 tests/reference/make_d2270_table.py
Needs:  pip install chemicals
"""
import pathlib

import chemicals
from chemicals.viscosity import VI_Hs, VI_Ls, VI_nus

OUT = pathlib.Path(__file__).resolve().parents[2] / "src" / "physics" / "d2270_table.csv"


def main() -> None:
    assert len(VI_nus) == len(VI_Ls) == len(VI_Hs)
    assert all(b > a for a, b in zip(VI_nus, VI_nus[1:])), "KV100 column must increase"
    lines = [
        "# ASTM D2270 Table 1: L and H (mm2/s) for KV100 from 2 to 70 mm2/s, linear interpolation between rows.",
        f"# Source: PyPI package chemicals {chemicals.__version__}, chemicals.viscosity.VI_nus / VI_Ls / VI_Hs.",
        "# Written by tests/reference/make_d2270_table.py; do not edit by hand.",
        "kv100_cst,l_cst,h_cst",
    ]
    for nu, l, h in zip(VI_nus, VI_Ls, VI_Hs):
        lines.append(f"{nu!r},{l!r},{h!r}")
    OUT.write_text("\n".join(lines) + "\n", encoding="utf-8")
    print(f"wrote {len(VI_nus)} rows to {OUT}")


if __name__ == "__main__":
    main()

"""Seeds for the csv_rows fuzz target, made from the test corpus in tests/bad_input/.

Each seed is one mode byte (bits 0-1: file kind units/checks/samples/events; bit 2: keep-going;
bit 3: put a valid header in front) followed by the file. Run from fuzz/:
    python3 make_seeds.py && cargo +nightly fuzz run csv_rows corpus/csv_rows seeds/csv_rows
"""
import os

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests", "bad_input")
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "seeds", "csv_rows")
KINDS = {"units": 0, "checks": 1, "samples": 2, "events": 3}
GOOD = [
    ("shop/units.csv", "units"),
    ("shop/checks.csv", "checks"),
    ("good/checks_bom.csv", "checks"),
    ("good/checks_semicolon_crlf.csv", "checks"),
    ("good/samples_tab.csv", "samples"),
    ("good/checks_us_units.csv", "checks"),
    ("good/checks_quoted_and_guarded.csv", "checks"),
]


def main():
    os.makedirs(OUT, exist_ok=True)
    n = 0
    with open(os.path.join(ROOT, "expected.tsv")) as table:
        for line in table:
            if line.startswith("#") or not line.strip():
                continue
            name, kind = line.split("\t")[:2]
            with open(os.path.join(ROOT, name), "rb") as f:
                data = f.read()
            for keep_going in (0, 4):
                n += 1
                with open(os.path.join(OUT, f"bad-{n}"), "wb") as f:
                    f.write(bytes([KINDS[kind] | keep_going]) + data)
    for name, kind in GOOD:
        with open(os.path.join(ROOT, name), "rb") as f:
            data = f.read()
        n += 1
        with open(os.path.join(OUT, f"good-{n}"), "wb") as f:
            f.write(bytes([KINDS[kind]]) + data)
        # The rows alone, behind the target's own header (mode bit 3).
        rows = data.split(b"\n", 1)[1] if b"\n" in data else b""
        n += 1
        with open(os.path.join(OUT, f"rows-{n}"), "wb") as f:
            f.write(bytes([KINDS[kind] | 8]) + rows)
    print(f"{n} seeds in {OUT}")


if __name__ == "__main__":
    main()

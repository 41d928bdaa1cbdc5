"""The fast CSV text is byte for byte Python's "%.9g" (the reference: CPython's own formatting,
which follows ISO C 7.21.6.1 for %g), including the hard cases."""
import numpy as np

from trapscape.viewers.csv_text import csv_block


def python_rows(numbers, flags, labels, label_of):
    return "".join(",".join("%.9g" % v for v in row) + f",{int(f)},{labels[k]}\n"
                   for row, f, k in zip(numbers, flags, label_of)).encode()


def hard_numbers():
    edges = [0.0, -0.0, 1.0, -1.0, 0.5, 1e-4, 9.9999999949e-5, 9.99999999951e-5, 1e-5,
             123456789.0, 999999999.0, 999999999.5, 999999999.4, 1e9, 1e9 + 1, 1234567890123.0,
             0.1, 0.2, 0.3, 1 / 3, 2 / 3, 1e-300, 1e300, 5e-324, 1.7976931348623157e308,
             1.0000000005, 1.0000000015, 2.5e-7, 12345.6789012, 100.0, 1e8, 99999999.95,
             float("nan"), float("inf"), -float("inf"), 4.4482216152605, 25.4, 9.80665]
    powers = [10.0 ** k for k in range(-30, 31)]
    return np.array(edges + powers + [-p for p in powers] + [np.nextafter(p, 0) for p in powers]
                    + [np.nextafter(p, 2 * p) for p in powers])


def test_every_number_is_what_python_writes():
    rng = np.random.default_rng(7)
    random = rng.choice([-1, 1], 60_000) * 10.0 ** rng.uniform(-40, 40, 60_000)
    integers = rng.integers(-10**12, 10**12, 2_000).astype(float)
    mantissa_ties = (rng.integers(10**8, 10**9, 2_000) + 0.5) * 10.0 ** rng.integers(-20, 20, 2_000)
    values = np.concatenate([hard_numbers(), random, integers, mantissa_ties])
    values = np.resize(values, (len(values) // 4 + 1) * 4).reshape(-1, 4)
    flags = rng.integers(-3, 3, len(values))
    labels = ["", "magnet-1", '"a, b"', "ünïcode"]
    label_of = rng.integers(0, len(labels), len(values))
    assert csv_block(values, flags, labels, label_of) == python_rows(values, flags, labels, label_of)


def test_an_empty_table_is_no_text():
    assert csv_block(np.empty((0, 3)), np.empty(0, int), [""], np.empty(0, int)) == b""

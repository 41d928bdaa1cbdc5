"""CSV text of a large number table, byte for byte what Python's "%.9g" gives, at C speed.

`field` writes up to 1e6 rows of twelve numbers; Python's % operator takes about 6 s for that,
these kernels well under 1 s. Each number is formatted from a 9-digit integer mantissa; a number
whose mantissa lies within 1e-5 of a rounding tie (where the division by a power of ten could
round the other way) or outside 1e-290..1e290 is handed back to Python's % instead, so the text
is always the same as "%.9g".
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

DIGITS = 9
_CELL_WIDTH = 16  # "-1.23456789e-123": the longest "%.9g" number with a 3-digit exponent
_TIE_GUARD = 1e-5
_EXPONENT_RANGE = 290
_POWERS = np.array([float(f"1e{k}") for k in range(-320, 321)])  # correctly rounded 10^k


def csv_block(numbers: np.ndarray, flags: np.ndarray, labels: list[str], label_of: np.ndarray) -> bytes:
    """Rows "n1,...,nk,flag,label\\n" as UTF-8 bytes.

    Parameters
    ----------
    numbers : numpy.ndarray, shape (N, K)
        Floats, each written as "%.9g" would.
    flags : numpy.ndarray of int, shape (N,)
        A whole number per row (written in decimal).
    labels : list of str
        The texts a row may end with (already quoted for CSV).
    label_of : numpy.ndarray of int, shape (N,)
        Which label each row ends with.
    """
    numbers = np.ascontiguousarray(numbers, dtype=np.float64)
    encoded = [text.encode("utf-8") for text in labels] or [b""]
    label_bytes = np.frombuffer(b"".join(encoded) or b"\0", dtype=np.uint8)
    label_start = np.cumsum([0] + [len(e) for e in encoded]).astype(np.int64)
    width = numbers.shape[1] * (_CELL_WIDTH + 1) + 21 + max(len(e) for e in encoded) + 2
    rows = np.empty((len(numbers), width), dtype=np.uint8)
    lengths = np.empty(len(numbers), dtype=np.int64)
    unsure = np.zeros(len(numbers), dtype=np.bool_)
    _format_rows(numbers, np.ascontiguousarray(flags, dtype=np.int64), label_bytes, label_start,
                 np.ascontiguousarray(label_of, dtype=np.int64), rows, lengths, unsure)
    for row in np.flatnonzero(unsure):  # rare: formatted by Python, same layout
        text = (",".join("%.9g" % v for v in numbers[row]) + f",{int(flags[row])},"
                + labels[label_of[row]] + "\n").encode("utf-8")
        rows[row, :len(text)] = np.frombuffer(text, dtype=np.uint8)
        lengths[row] = len(text)
    return _joined(rows, lengths).tobytes()


@njit(cache=True)
def _joined(rows, lengths):
    out = np.empty(lengths.sum(), dtype=np.uint8)
    at = 0
    for i in range(rows.shape[0]):
        out[at:at + lengths[i]] = rows[i, :lengths[i]]
        at += lengths[i]
    return out


_ROWS_PER_TASK = 1024


@njit(cache=True, parallel=True)
def _format_rows(numbers, flags, label_bytes, label_start, label_of, rows, lengths, unsure):
    n = numbers.shape[0]
    for task in prange((n + _ROWS_PER_TASK - 1) // _ROWS_PER_TASK):
        digits = np.empty(20, dtype=np.uint8)  # scratch, one per task (not per number)
        for i in range(task * _ROWS_PER_TASK, min(n, (task + 1) * _ROWS_PER_TASK)):
            at = 0
            for k in range(numbers.shape[1]):
                at, ok = _write_g(numbers[i, k], rows, i, at, digits)
                if not ok:
                    unsure[i] = True
                rows[i, at] = 44  # ","
                at += 1
            at = _write_int(flags[i], rows, i, at, digits, 0)
            rows[i, at] = 44
            at += 1
            label = label_of[i]
            for b in range(label_start[label], label_start[label + 1]):
                rows[i, at] = label_bytes[b]
                at += 1
            rows[i, at] = 10  # "\n"
            lengths[i] = at + 1


@njit(cache=True)
def _write_text(text_codes, out, i, at):
    for c in text_codes:
        out[i, at] = c
        at += 1
    return at


@njit(cache=True)
def _write_int(value, out, i, at, digits, base):
    if value < 0:
        out[i, at] = 45  # "-"
        at += 1
        value = -value
    n = 0
    v = np.uint64(value)
    while True:
        rest = v // np.uint64(10)
        digits[base + n] = 48 + (v - np.uint64(10) * rest)
        n += 1
        v = rest
        if v == 0:
            break
    for j in range(n - 1, -1, -1):
        out[i, at] = digits[base + j]
        at += 1
    return at


@njit(cache=True)
def _write_g(x, out, i, at, digits):
    """x as C's "%.9g" (ISO C 7.21.6.1): returns the new position and whether it is sure."""
    if math.isnan(x):
        return _write_text((110, 97, 110), out, i, at), True  # "nan"
    if x < 0.0 or (x == 0.0 and math.copysign(1.0, x) < 0.0):
        out[i, at] = 45
        at += 1
        x = -x
    if math.isinf(x):
        return _write_text((105, 110, 102), out, i, at), True  # "inf"
    if x == 0.0:
        out[i, at] = 48
        return at + 1, True
    exponent = int(math.floor(math.log10(x)))
    if abs(exponent) > _EXPONENT_RANGE:
        return at, False
    mantissa, exponent, sure = _mantissa(x, exponent)
    m = np.uint64(mantissa)  # unsigned: division by 10 without Python's floor-mod branches
    for j in range(DIGITS - 1, -1, -1):
        rest = m // np.uint64(10)
        digits[j] = 48 + (m - np.uint64(10) * rest)
        m = rest
    last = DIGITS - 1
    while last > 0 and digits[last] == 48:  # %g drops trailing zeros
        last -= 1
    if exponent < -4 or exponent >= DIGITS:
        out[i, at] = digits[0]
        at += 1
        if last > 0:
            out[i, at] = 46  # "."
            at += 1
            for j in range(1, last + 1):
                out[i, at] = digits[j]
                at += 1
        out[i, at] = 101  # "e"
        out[i, at + 1] = 45 if exponent < 0 else 43
        at += 2
        magnitude = abs(exponent)
        if magnitude < 10:
            out[i, at] = 48
            at += 1
        return _write_int(magnitude, out, i, at, digits, DIGITS), sure
    if exponent < 0:
        out[i, at] = 48
        out[i, at + 1] = 46
        at += 2
        for _ in range(-exponent - 1):
            out[i, at] = 48
            at += 1
        for j in range(last + 1):
            out[i, at] = digits[j]
            at += 1
        return at, sure
    for j in range(exponent + 1):
        out[i, at] = digits[j]
        at += 1
    if last > exponent:
        out[i, at] = 46
        at += 1
        for j in range(exponent + 1, last + 1):
            out[i, at] = digits[j]
            at += 1
    return at, sure


@njit(cache=True)
def _mantissa(x, exponent):
    """The 9-digit rounded mantissa of x > 0 and its decimal exponent; unsure near a tie."""
    low = 10.0 ** (DIGITS - 1)
    for _ in range(3):  # log10 may be one off near a power of ten
        shift = DIGITS - 1 - exponent
        scaled = x * _POWERS[320 + shift] if shift > 0 else x / _POWERS[320 - shift]
        if scaled < low - 0.5:
            exponent -= 1
        elif scaled >= 10.0 * low - 0.5:
            exponent += 1
        else:
            break
    whole = math.floor(scaled)
    fraction = scaled - whole
    sure = abs(fraction - 0.5) > _TIE_GUARD
    mantissa = np.int64(whole) + (1 if fraction > 0.5 else 0)
    if mantissa >= 10 ** DIGITS:
        mantissa //= 10
        exponent += 1
    return mantissa, exponent, sure

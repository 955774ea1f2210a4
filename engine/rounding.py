"""Rounding for the reader: the one rule every shown figure and every "did it change?" follows.

A number is rounded half-up (halves away from zero) on its decimal form as written: a float is
read through ``repr`` (the shortest text that reads back as the same float), so 5000000.015 at
two decimals is 5000000.02 although the float stored for it is a little below. The result of
a value that rounds to zero carries no sign. Phrasing writes figures with :func:`round_half_up`;
the fact table decides whether a shown figure moved with :func:`round_half_up_array`, which
gives the same numbers for a whole column at once.

A leaf module: it imports nothing of Stetline's; no I/O.
"""

from __future__ import annotations

from decimal import ROUND_HALF_UP, Context, Decimal, InvalidOperation
from numbers import Integral, Real
from typing import Final

import numpy as np
import numpy.typing as npt

# Enough digits for any float written out in full (about 310) plus the decimals asked for.
CONTEXT: Final = Context(prec=1000, rounding=ROUND_HALF_UP, traps=[InvalidOperation])
_QUANTA: Final[tuple[Decimal, ...]] = tuple(Decimal(1).scaleb(-i) for i in range(16))
# Column rounding in float arithmetic is exact only away from the halfway points and below
# 2**50 (where a float still holds quarters): every other value takes the Decimal path.
_FLOAT_SAFE_BELOW: Final = 2.0**50
_FLOAT_SLACK: Final = 2.0**-45  # relative; float error here is at most about 2**-52


def to_decimal(x: float | Decimal) -> Decimal:
    """The number as written: a float through its repr, a Decimal or an integer as it is."""
    kind = type(x)
    if kind is float:
        d = Decimal(repr(x))
    elif kind is Decimal:
        d = x  # type: ignore[assignment]
    elif kind is int:
        d = Decimal(x)
    elif isinstance(x, bool) or isinstance(x, (str, bytes)):
        raise TypeError(f"expected a number, got {type(x).__name__} {x!r}")
    elif isinstance(x, Decimal):
        d = x
    elif isinstance(x, Integral):
        d = Decimal(int(x))
    elif isinstance(x, Real):
        d = Decimal(float.__repr__(float(x)))
    else:
        raise TypeError(f"expected a number, got {type(x).__name__} {x!r}")
    if not d.is_finite():
        raise ValueError(f"cannot phrase a number that is not finite: {x!r}")
    return d


def check_decimals(decimals: int) -> None:
    """Refuse a count of decimals that is not a whole number 0 or more."""
    if isinstance(decimals, bool) or not isinstance(decimals, int) or decimals < 0:
        raise ValueError(f"decimals must be a whole number 0 or more, got {decimals!r}")


def quantize(d: Decimal, decimals: int) -> Decimal:
    """Round a Decimal half-up to `decimals` places; zero comes back without a sign."""
    quantum = _QUANTA[decimals] if decimals < len(_QUANTA) else Decimal(1).scaleb(-decimals)
    try:
        q = d.quantize(quantum, context=CONTEXT)
    except InvalidOperation as exc:
        raise ValueError(f"{d} is too large to show with {decimals} decimals") from exc
    return q if q else q.copy_abs()


def as_whole(n: int, what: str) -> int:
    """The whole number n as an int; refuse a bool or a number with a fraction, naming `what` needs it."""
    if type(n) is int:
        return n
    if isinstance(n, bool):
        raise TypeError(f"{what} needs a whole number, got {n!r}")
    if isinstance(n, Integral):
        return int(n)
    d = to_decimal(n)
    if d != d.to_integral_value():
        raise ValueError(f"{what} needs a whole number, got {n!r}")
    return int(d)


def round_half_up(x: float | Decimal, decimals: int) -> Decimal:
    """Round x as written (a float through its repr) half-up to `decimals` places; zero has no sign."""
    check_decimals(decimals)
    return quantize(to_decimal(x), decimals)


def round_half_up_array(
    values: npt.ArrayLike, decimals: npt.ArrayLike | int
) -> npt.NDArray[np.float64]:
    """Round every value as :func:`round_half_up` does, each at its decimals, as floats.

    Missing values (NaN) stay missing. Values away from a halfway point are rounded in float
    arithmetic, which gives the same float there; the rest go through :func:`round_half_up`.
    """
    x = np.asarray(values, dtype="float64")
    places = np.broadcast_to(np.asarray(decimals, dtype="int64"), x.shape)
    if np.any(places < 0):
        raise ValueError("decimals must be whole numbers 0 or more")
    capped = np.minimum(places, 15)
    factor = np.power(10.0, capped)  # exact for these powers
    with np.errstate(invalid="ignore", over="ignore"):
        scaled = np.abs(x) * factor
        whole = np.floor(scaled + 0.5)
        from_half = np.abs(scaled - np.floor(scaled) - 0.5)
        fast = (from_half > scaled * _FLOAT_SLACK) & (scaled < _FLOAT_SAFE_BELOW) & (places <= 15)
        out = np.where(np.isfinite(x), np.sign(x) * whole / factor + 0.0, x)
    slow = np.flatnonzero(~fast & np.isfinite(x))
    for i in slow:  # halfway points and huge values only: a few per column
        out.flat[i] = float(round_half_up(float(x.flat[i]), int(places.flat[i])))
    return out

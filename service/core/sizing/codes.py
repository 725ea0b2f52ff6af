"""The stable codes of the sizing and verification checks, across every regime.

A check's ``name`` is its machine-readable code: an app maps a failure to its own text or action by it, never by
parsing a sentence.  The set is the union of each regime's check order, so a check a regime adds is listed by
adding it there (tests/unit/test_check_codes.py fails on a check whose name is in no order).
"""

from __future__ import annotations

from .checks import CHECK_ORDER as IEC_CHECK_ORDER
from .nec.regime import CHECK_ORDER as NEC_CHECK_ORDER

CHECK_CODES: tuple[str, ...] = tuple(dict.fromkeys(IEC_CHECK_ORDER + NEC_CHECK_ORDER))
# Where every size passes, the governing "check" is that the smallest size the table lists was reached.
SMALLEST_LISTED_SIZE = "smallest_listed_size"
GOVERNING_CODES: tuple[str, ...] = CHECK_CODES + (SMALLEST_LISTED_SIZE,)

"""In-process rate limit: a token bucket per caller, in bounded memory.

Each caller (an API key's label, or a client address when keys are off) has a bucket of ``requests`` tokens
refilled evenly over ``window_s``: a burst of up to ``requests`` is let through, then one request per
``window_s / requests`` seconds.  The buckets live in one process: with several workers or replicas each
enforces its own share, so a limit shared by all of them belongs at the gateway (see the README).

Memory is bounded by ``max_clients``: the bucket seen longest ago is forgotten first.  Forgetting a bucket
can only give its caller a fresh allowance, never refuse anyone, so an attacker cycling through addresses
cannot lock a real caller out this way.
"""

from __future__ import annotations

import math
import time
from collections import OrderedDict
from typing import Callable


class RateLimiter:
    def __init__(self, requests: int, window_s: float, max_clients: int,
                 clock: Callable[[], float] = time.monotonic) -> None:
        self.capacity = float(requests)
        self.rate = requests / window_s  # tokens per second
        self.max_clients = max_clients
        self._clock = clock
        self._buckets: OrderedDict[str, tuple[float, float]] = OrderedDict()  # caller -> (tokens, updated at)

    def __len__(self) -> int:
        return len(self._buckets)

    def take(self, caller: str) -> float:
        """Spend one token of ``caller``'s bucket: 0.0 if allowed, else the seconds until one is back."""
        return self._visit(caller, spend=True)

    def wait(self, caller: str) -> float:
        """The seconds until ``caller`` has a token (0.0: it has one now), spending none.  A caller with no
        bucket yet gets none made, so looking does not push spent buckets out of the bounded memory."""
        if caller not in self._buckets:
            return 0.0
        return self._visit(caller, spend=False)

    def _visit(self, caller: str, spend: bool) -> float:
        now = self._clock()
        tokens, updated = self._buckets.pop(caller, (self.capacity, now))
        tokens = min(self.capacity, tokens + (now - updated) * self.rate)
        wait = 0.0
        if tokens < 1.0:
            wait = (1.0 - tokens) / self.rate
        elif spend:
            tokens -= 1.0
        self._buckets[caller] = (tokens, now)  # re-inserted last: the most recently seen
        while len(self._buckets) > self.max_clients:
            self._buckets.popitem(last=False)
        return wait


def retry_after_header(wait_s: float) -> str:
    """Retry-After is whole seconds (RFC 9110); round up so a client that obeys it is let in."""
    return str(max(1, math.ceil(wait_s)))

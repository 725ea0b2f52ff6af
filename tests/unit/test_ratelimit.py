"""The per-caller token bucket: burst, even refill, Retry-After, bounded memory."""

from __future__ import annotations

import pytest

from service.api.ratelimit import RateLimiter, retry_after_header


class Clock:
    def __init__(self) -> None:
        self.now = 1000.0

    def __call__(self) -> float:
        return self.now


def test_a_burst_of_the_limit_passes_then_the_caller_waits_for_the_refill():
    clock = Clock()
    limiter = RateLimiter(requests=3, window_s=60, max_clients=10, clock=clock)
    assert [limiter.take("a") for _ in range(3)] == [0.0, 0.0, 0.0]
    assert limiter.take("a") == pytest.approx(20.0)  # one token per 60/3 s
    clock.now += 20.0
    assert limiter.take("a") == 0.0
    assert limiter.take("a") > 0


def test_callers_have_their_own_buckets():
    limiter = RateLimiter(requests=1, window_s=10, max_clients=10, clock=Clock())
    assert limiter.take("a") == 0.0 and limiter.take("b") == 0.0
    assert limiter.take("a") > 0 and limiter.take("b") > 0


def test_memory_is_bounded_by_forgetting_the_caller_seen_longest_ago():
    clock = Clock()
    limiter = RateLimiter(requests=1, window_s=3600, max_clients=100, clock=clock)
    limiter.take("regular")
    for n in range(10_000):
        limiter.take(f"address:{n}")
        if n % 50 == 0:
            limiter.take("regular")  # seen recently: kept, and still limited
    assert len(limiter) == 100
    assert limiter.take("regular") > 0
    assert limiter.take("address:0") == 0.0  # forgotten: a fresh allowance, never a refusal


@pytest.mark.parametrize(("wait", "header"), [(0.01, "1"), (1.0, "1"), (1.2, "2"), (59.5, "60")])
def test_retry_after_is_whole_seconds_rounded_up(wait, header):
    assert retry_after_header(wait) == header


def test_wait_tells_the_time_to_a_token_without_spending_one():
    # common practice (token bucket): looking at a bucket must not drain it
    clock = Clock()
    limiter = RateLimiter(requests=2, window_s=60, max_clients=10, clock=clock)
    assert [limiter.wait("a") for _ in range(5)] == [0.0] * 5
    assert [limiter.take("a") for _ in range(2)] == [0.0, 0.0]
    assert limiter.wait("a") == pytest.approx(30.0) and limiter.wait("a") == pytest.approx(30.0)
    clock.now += 30.0
    assert limiter.wait("a") == 0.0 and limiter.take("a") == 0.0


def test_looking_at_unknown_callers_forgets_no_spent_bucket():
    # common practice (bounded memory): callers that only pass the failure check must not evict the address
    # that is guessing keys, or many clean requests would hand the guesser a fresh allowance
    limiter = RateLimiter(requests=1, window_s=60, max_clients=2, clock=Clock())
    assert limiter.take("guesser") == 0.0 and limiter.take("guesser") > 0
    for n in range(100):
        assert limiter.wait(f"clean-{n}") == 0.0
    assert len(limiter) == 1 and limiter.wait("guesser") > 0

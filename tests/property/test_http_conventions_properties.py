"""Properties of the HTTP conventions of issue 16: If-None-Match matching and gzip, over generated inputs."""

from __future__ import annotations

import gzip

from hypothesis import given
from hypothesis import strategies as st

from service.api.compression import accepts_gzip, compress
from service.api.reference import none_match

OPAQUE = st.text(alphabet="abcdef0123456789-._", min_size=1, max_size=40)


@given(tags=st.lists(st.tuples(OPAQUE, st.booleans()), max_size=6), target=OPAQUE,
       separator=st.sampled_from([",", ", ", " ,", " , "]), lines=st.integers(1, 3))
def test_if_none_match_is_the_weak_comparison_over_every_listed_tag(tags, target, separator, lines):
    # RFC 9110, section 13.1.2: weak comparison ignores W/; the field is a list, possibly over several lines
    written = [("W/" if weak else "") + f'"{opaque}"' for opaque, weak in tags]
    chunks = [separator.join(written[i::lines]) for i in range(lines)]
    assert none_match([c for c in chunks if c], target) is (target in {opaque for opaque, _ in tags})


@given(body=st.binary(max_size=20_000))
def test_gzip_gives_back_the_body_and_the_same_bytes_each_time(body):
    packed = compress(body)
    assert gzip.decompress(packed) == body and compress(body) == packed  # mtime 0: deterministic


@given(q=st.floats(min_value=0, max_value=1, allow_nan=False), others=st.lists(st.sampled_from(["br", "deflate",
                                                                                               "identity"]), max_size=3))
def test_gzip_is_accepted_exactly_when_its_q_is_above_zero(q, others):
    # RFC 9110, section 12.5.3: a qvalue of 0 means "not acceptable"
    header = ", ".join([*others, f"gzip;q={q:.3f}"])
    assert accepts_gzip([header]) is (float(f"{q:.3f}") > 0)

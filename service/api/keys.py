"""API keys: configured as hashes only, checked in constant time.

The service never holds a plain key: the settings carry hex SHA-256 (or SHA-512) digests, and a presented
key is hashed and compared with every configured digest by ``hmac.compare_digest``, all of them every time,
so neither the answer's timing nor an early exit tells how much of a key matched.  A plain (unsalted, fast)
hash is enough because keys are random tokens of 256 bits (``new`` below), not passwords: there is nothing
to guess a dictionary from.

Command line (the key is read from standard input, so it stays out of shell history and process lists)::

    python -m service.api.keys new           # a fresh random key, and its hash line for the settings
    python -m service.api.keys hash          # hash a key given on stdin
"""

from __future__ import annotations

import hashlib
import hmac
import re
import secrets
import sys
from dataclasses import dataclass
from pathlib import Path

from service.api.settings import Settings

_ALGORITHMS = {64: "sha256", 128: "sha512"}  # hex digest length -> hashlib name
_ENTRY = re.compile(r"^(?:(?P<label>[A-Za-z0-9._-]{1,64})=)?(?:sha256:|sha512:)?(?P<digest>[0-9a-fA-F]+)$")
BEARER_TOKEN = re.compile(r"^[\x21-\x7e]{1,512}$")  # visible ASCII, no spaces: what a Bearer credential may be


@dataclass(frozen=True, slots=True)
class KeyHash:
    label: str
    algorithm: str
    digest: bytes


def parse_key_hashes(text: str, source: str) -> list[KeyHash]:
    """Entries separated by commas or newlines, ``#`` starting a comment; a bad entry stops start-up.

    A blank line or a comment is nothing, but an empty entry on a line (``a,,b``, a lone ``,``) is refused, and
    so is a setting that is not blank yet holds no hash: either would otherwise turn keys off in silence."""
    found = []
    for line_no, line in enumerate(text.splitlines(), 1):
        content = line.split("#", 1)[0]
        if not content.strip():
            continue
        for raw in content.split(","):
            entry = raw.strip()
            if not entry:
                raise ValueError(f"{source} line {line_no}: an empty entry (a stray comma?)")
            match = _ENTRY.match(entry)
            algorithm = _ALGORITHMS.get(len(match["digest"])) if match else None
            if algorithm is None:  # the entry itself is not echoed: it may be a plain key pasted by mistake
                raise ValueError(f"{source} line {line_no}: expected [label=]<64 or 128 hex digits> "
                                 "(make one with: python -m service.api.keys hash)")
            label = match["label"] or f"key-{len(found) + 1}"
            found.append(KeyHash(label, algorithm, bytes.fromhex(match["digest"])))
    if text.strip() and not found:
        raise ValueError(f"{source} is set but holds no key hash: every caller would be let in")
    return found


class KeyRing:
    """The configured key hashes; ``match`` says which label a presented key belongs to."""

    def __init__(self, hashes: list[KeyHash]) -> None:
        self._hashes = tuple(hashes)
        self._algorithms = tuple(sorted({h.algorithm for h in hashes}))

    @classmethod
    def from_settings(cls, settings: Settings) -> KeyRing:
        hashes = parse_key_hashes(settings.api_key_hashes, "AMPLINE_API_KEY_HASHES")
        if settings.api_key_hashes_file:
            path = Path(settings.api_key_hashes_file)
            try:
                text = path.read_text(encoding="utf-8")
            except OSError as exc:
                raise ValueError(f"AMPLINE_API_KEY_HASHES_FILE: cannot read {path}: {exc.strerror}") from None
            hashes += parse_key_hashes(text, f"AMPLINE_API_KEY_HASHES_FILE ({path})")
            if not hashes:
                raise ValueError(f"AMPLINE_API_KEY_HASHES_FILE ({path}) holds no key hash: every caller would be refused")
        return cls(hashes)

    def __len__(self) -> int:
        return len(self._hashes)

    @property
    def enabled(self) -> bool:
        return bool(self._hashes)

    def match(self, key: str) -> str | None:
        """The label of the configured hash ``key`` has, or None; every hash is compared, whatever matches."""
        presented = {a: hashlib.new(a, key.encode("utf-8")).digest() for a in self._algorithms}
        label = None
        for h in self._hashes:
            if hmac.compare_digest(presented[h.algorithm], h.digest) and label is None:
                label = h.label
        return label


def hash_key(key: str) -> str:
    return hashlib.sha256(key.encode("utf-8")).hexdigest()


def main(argv: list[str]) -> int:
    command = argv[0] if argv else ""
    if command == "new":
        key = secrets.token_urlsafe(32)
        print(f"key (give it to the caller, store it nowhere else): {key}")
        print(f"hash (for AMPLINE_API_KEY_HASHES, optionally as label=<hash>): {hash_key(key)}")
        return 0
    if command == "hash":
        if sys.stdin.isatty():
            print("type the key, then Enter:", file=sys.stderr)
        key = sys.stdin.readline().strip()
        if not BEARER_TOKEN.match(key):
            print("a key is 1-512 visible ASCII characters without spaces", file=sys.stderr)
            return 2
        print(hash_key(key))
        return 0
    print(__doc__.split("Command line", 1)[1].split("::", 1)[1].rstrip(), file=sys.stderr)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))

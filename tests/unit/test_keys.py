"""API-key hashes: parsing the settings, matching a presented key, the hashing command."""

from __future__ import annotations

import hashlib
import io

import pytest

from service.api import keys
from service.api.keys import KeyRing, hash_key, parse_key_hashes
from service.api.settings import Settings

KEY = "k3y-for-the-quoting-system"


def test_a_key_matches_the_label_of_its_hash_and_nothing_else():
    other = hashlib.sha512(b"site-app").hexdigest()
    ring = KeyRing(parse_key_hashes(f"quoting={hash_key(KEY)}, site={other}", "test"))
    assert ring.enabled
    assert ring.match(KEY) == "quoting"
    assert ring.match("site-app") == "site"  # a SHA-512 entry
    assert ring.match(KEY + "x") is None and ring.match("") is None


def test_entries_without_a_label_are_numbered_and_prefixes_are_accepted():
    ring = KeyRing(parse_key_hashes(f"sha256:{hash_key('a')}\n{hash_key('b')}  # the second", "test"))
    assert (ring.match("a"), ring.match("b")) == ("key-1", "key-2")


@pytest.mark.parametrize("entry", ["not-hex", "abc123", KEY, "label=" + "0" * 63, "bad label=" + "0" * 64])
def test_a_bad_entry_stops_start_up_without_echoing_it(entry):
    with pytest.raises(ValueError) as caught:
        parse_key_hashes(entry, "AMPLINE_API_KEY_HASHES")
    assert entry not in str(caught.value)


def test_no_hashes_means_keys_are_off():
    assert not KeyRing.from_settings(Settings()).enabled


def test_hashes_from_a_mounted_file_join_those_of_the_setting(tmp_path):
    path = tmp_path / "keys"
    path.write_text(f"# issued 2026-11\nfile-key={hash_key('from-file')}\n", encoding="utf-8")
    ring = KeyRing.from_settings(Settings(api_key_hashes=hash_key("from-env"), api_key_hashes_file=str(path)))
    assert (ring.match("from-file"), ring.match("from-env")) == ("file-key", "key-1")


def test_an_unreadable_or_empty_key_file_stops_start_up(tmp_path):
    with pytest.raises(ValueError, match="cannot read"):
        KeyRing.from_settings(Settings(api_key_hashes_file=str(tmp_path / "missing")))
    empty = tmp_path / "empty"
    empty.write_text("# nothing yet\n", encoding="utf-8")
    with pytest.raises(ValueError, match="no key hash"):
        KeyRing.from_settings(Settings(api_key_hashes_file=str(empty)))


def test_hash_command_reads_the_key_from_stdin(monkeypatch, capsys):
    monkeypatch.setattr("sys.stdin", io.StringIO(KEY + "\n"))
    assert keys.main(["hash"]) == 0
    assert capsys.readouterr().out.strip() == hashlib.sha256(KEY.encode()).hexdigest()


def test_new_command_prints_a_key_and_its_hash(capsys):
    assert keys.main(["new"]) == 0
    out = capsys.readouterr().out.splitlines()
    key = out[0].rsplit(" ", 1)[1]
    assert len(key) >= 40 and out[1].endswith(hash_key(key))


# issue 21, item 8: a setting that holds no hash must not turn keys off in silence (fail closed, common practice)
@pytest.mark.parametrize("value", [",", " , ", ",,,", f"{hash_key('a')},", f",{hash_key('a')}",
                                   f"{hash_key('a')},,{hash_key('b')}", "# a comment only"])
def test_an_empty_entry_or_a_setting_without_a_hash_stops_start_up(value):
    with pytest.raises(ValueError, match="empty entry|holds no key hash"):
        KeyRing.from_settings(Settings(api_key_hashes=value))


def test_blank_lines_and_comments_in_a_key_file_are_not_entries(tmp_path):
    path = tmp_path / "keys"
    path.write_text(f"# issued 2026-11\n\nquoting={hash_key('q')}  # the quoting system\n\n", encoding="utf-8")
    assert KeyRing.from_settings(Settings(api_key_hashes_file=str(path))).match("q") == "quoting"

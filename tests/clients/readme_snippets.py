"""The code blocks of the README's "Calling it from your code" section, which tests/clients compile and run."""

from __future__ import annotations

import re
from pathlib import Path

README = Path(__file__).resolve().parents[2] / "README.md"
SECTION = "## Calling it from your code"
README_BASE_URL = "http://127.0.0.1:8000"


def readme_section() -> str:
    text = README.read_text(encoding="utf-8")
    assert SECTION in text, f"README.md has no '{SECTION}' section"
    return text.split(SECTION, 1)[1].split("\n## ", 1)[0]


def readme_blocks(language: str) -> list[str]:
    return re.findall(rf"```{language}\n(.*?)```", readme_section(), flags=re.S)


def readme_snippet(language: str) -> str:
    """The section's one code block in that language."""
    blocks = readme_blocks(language)
    assert len(blocks) == 1, f"expected one {language} block in the README's '{SECTION}', found {len(blocks)}"
    return blocks[0]

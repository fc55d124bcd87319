"""Replace the results table in README.md's "Performance" section with the one from latest.json:
``python -m benchmarks.update_readme`` (only the lines between the two markers change)."""

from __future__ import annotations

import json
from pathlib import Path

from .__main__ import RESULTS
from .readme_table import table

README = Path(__file__).resolve().parent.parent / "README.md"
START = "<!-- benchmark-table:start -->"
END = "<!-- benchmark-table:end -->"


def main() -> int:
    text = README.read_text(encoding="utf-8")
    if START not in text or END not in text:
        print(f"README.md has no {START} … {END} markers; nothing changed")
        return 1
    head, rest = text.split(START, 1)
    _, tail = rest.split(END, 1)
    new = table(json.loads(RESULTS.read_text(encoding="utf-8")))
    README.write_text(f"{head}{START}\n{new}\n{END}{tail}", encoding="utf-8")
    print("README.md performance table updated")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

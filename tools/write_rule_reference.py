#!/usr/bin/env python3
"""Write docs/rules.md from the registered rules' metadata.

Usage (from anywhere in the repository):

    python tools/write_rule_reference.py          # (re)write docs/rules.md
    python tools/write_rule_reference.py --check  # exit 1 if docs/rules.md is stale
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TARGET = ROOT / "docs" / "rules.md"


def expected_text() -> str:
    # Imported here so the path set-up below also works for a non-installed checkout.
    from protolint.report.rule_reference import rule_reference_markdown
    from protolint.rules.registry import iter_metas

    return rule_reference_markdown(list(iter_metas()))


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="only report whether the file is stale")
    args = parser.parse_args(argv)

    text = expected_text()
    if args.check:
        current = TARGET.read_text(encoding="utf-8") if TARGET.exists() else None
        if current != text:
            print(f"{TARGET.relative_to(ROOT)} is stale; run: python tools/write_rule_reference.py", file=sys.stderr)
            return 1
        return 0
    TARGET.parent.mkdir(parents=True, exist_ok=True)
    # newline="\n": the file must be byte-identical on every platform for the staleness test.
    TARGET.write_text(text, encoding="utf-8", newline="\n")
    print(f"wrote {TARGET.relative_to(ROOT)}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    if str(ROOT) not in sys.path:
        sys.path.insert(0, str(ROOT))
    sys.exit(main())

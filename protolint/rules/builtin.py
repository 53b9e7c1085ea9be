"""Checks performed by the loader (schema, references) and the engine (waivers).

They are registered like rules so that ``protolint rules`` documents them and SARIF and JUnit
reports list them, but they have no rule function: the loader and the engine emit them.
"""

from __future__ import annotations

from protolint.rules.registry import register_builtin

_SCHEMA_SOURCE = "protolint plan format (schemas/plan.schema.json)"

register_builtin("schema/missing-key", "error", _SCHEMA_SOURCE, "A required key is missing.", """
    The plan format requires this key; without it the plan cannot be checked further.

    **Passes**: `study:` with `id`, `title`, `design`, `arms`, `first_assessment`, `enrolment_weeks`,
    `treatment_weeks` and `sites`.

    **Fails**: a `study:` mapping without `first_assessment`.
    """)
register_builtin("schema/unknown-key", "error", _SCHEMA_SOURCE, "A key the plan format does not know.", """
    Unknown keys are usually typing mistakes (`dya` for `day`); they would be silently ignored
    otherwise. The message suggests the closest known key.

    **Passes**: `day: 14` inside a visit.

    **Fails**: `dya: 14` inside a visit.
    """)
register_builtin("schema/wrong-type", "error", _SCHEMA_SOURCE, "A value of the wrong kind (text for a number, a list for a mapping).", """
    Each key takes one kind of value; numbers written as text (`"0.8"` in quotes) are text.

    **Passes**: `power: 0.8`.

    **Fails**: `power: high`.
    """)
register_builtin("schema/value-not-allowed", "error", _SCHEMA_SOURCE, "A value outside the closed list the key accepts.", """
    Keys with a closed vocabulary (instrument kind, endpoint role, rating mode …) accept only
    the listed words, so that rules can rely on them.

    **Passes**: `role: primary`.

    **Fails**: `role: main`.
    """)
register_builtin("schema/invalid-date", "error", _SCHEMA_SOURCE, "A date that is not a real calendar date written YYYY-MM-DD.", """
    Dates drive the date rules (SOP effective dates, certification expiry), so they must be
    real dates in ISO 8601 form.

    **Passes**: `effective: 2026-02-28`.

    **Fails**: `effective: 2026-02-30` or `effective: 28/02/2026`.
    """)
register_builtin("schema/out-of-range", "error", _SCHEMA_SOURCE, "A number or a list outside its allowed range.", """
    Probabilities lie between 0 and 1, counts are positive, lists that must not be empty are not.

    **Passes**: `dropout: 0.15`.

    **Fails**: `dropout: 15` (a percentage written as a whole number).
    """)
register_builtin("schema/invalid-form", "error", _SCHEMA_SOURCE, "A value not written in the expected form (an identifier with spaces, a malformed rule id).", """
    Identifiers use letters, digits, `.`, `_` and `-` so that they can be referred to and
    printed safely.

    **Passes**: `id: LSC-8`.

    **Fails**: `id: "LSC 8"`.
    """)
register_builtin("schema/too-large", "error", "common practice (a document must stay printable)", "The plan asks documents or the calendar to list more than they can hold.", """
    Some numbers multiply: sites × raters per site is the number of sign-off rows in the binder,
    sites × rating weeks ÷ the monitoring interval the number of monitoring rounds. Each number
    has its own bound in the schema; this check bounds their product (100,000 monitoring rounds,
    50,000 sign-off rows, 200,000 calendar events) before any document is built.

    **Passes**: 30 sites with weekly monitoring for two years (about 3,100 rounds).

    **Fails**: 2,000 sites with a round every week for ten years (over a million rounds).
    """)
register_builtin("schema/duplicate-id", "error", _SCHEMA_SOURCE, "Two entries of one list share an id.", """
    Ids are how endpoints, pools, SOPs and waivers refer to each other; a repeated id makes
    every such reference ambiguous.

    **Passes**: visits `baseline`, `week-4`.

    **Fails**: two visits both with `id: week-4`.
    """)
register_builtin("schema/unknown-reference", "error", _SCHEMA_SOURCE, "A reference to an id that does not exist in the plan.", """
    An endpoint's instrument, visits and rater pool, an SOP's covered instruments, a waiver's
    rule and target must all name something that exists.

    **Passes**: `instrument: LSC8` with an instrument whose id is `LSC8`.

    **Fails**: `instrument: LSC-8` when the instrument's id is `LSC8`.
    """)
register_builtin("schema/text-file-outside-folder", "error", _SCHEMA_SOURCE,
                 "An SOP's text file is not inside the plan's folder.", """
    An SOP's `text_file` is read into the SOP binder, so it may only name a file in the plan's
    own folder or below it. An absolute path, a path with `..`, or a symbolic link that leads
    out of the folder could make a document print a file nobody meant to publish; the file is
    not read.

    **Passes**: `text_file: sops/SOP-RAT-001.md` beside the plan.

    **Fails**: `text_file: ../other-trial/SOP.md`, `text_file: /etc/passwd`, or a link
    `sops/SOP.md` that points outside the plan's folder.
    """)
register_builtin("schema/text-file-unreadable", "error", _SCHEMA_SOURCE,
                 "An SOP's text file is missing, too large or not UTF-8 text.", """
    The file an SOP's `text_file` names must exist, be a regular file (not a folder, a pipe
    or a device) of at most 256 KiB, and hold UTF-8 text without control characters. A
    binder must never be filed with an SOP's text silently missing.

    **Passes**: `text_file: sops/SOP-RAT-001.md`, a UTF-8 Markdown file of a few kilobytes.

    **Fails**: a misspelt file name, a file saved as UTF-16, or a 10 MB export.
    """)

_WAIVER_SOURCE = "common practice (documented exceptions expire and are reviewed)"

register_builtin("waivers/expired", "warning", _WAIVER_SOURCE, "A waiver has passed its expiry date.", """
    A waiver records a justified exception for a limited time. After its expiry date (compared
    with `--as-of`, or the plan date) it no longer applies, and the finding it covered is
    reported again. Renew it with a new approval, or fix the plan.

    **Passes**: `expires: 2027-06-30` checked as of 2027-01-01.

    **Fails**: `expires: 2026-06-30` checked as of 2027-01-01.
    """)
register_builtin("waivers/unused", "warning", _WAIVER_SOURCE, "A waiver matches no finding.", """
    A waiver that matches nothing is stale (the plan was fixed) or aims at the wrong place
    (a typing mistake in its target); either way it should be removed or corrected, so that
    reviewers are not misled about which exceptions are in force.

    **Passes**: a waiver whose rule and target match a finding.

    **Fails**: a waiver for `sop/review-overdue` when no SOP review is overdue.
    """)

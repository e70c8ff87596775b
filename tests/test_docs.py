"""The file formats are documented inside the repository (docs/), and readers are sent there."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
OLD_CONTRACT = "interfaces" + ".md"  # the shared contract file outside the repository (split: not a hit here)
FORMAT_DOCS = (
    "README.md",
    "conventions.md",
    "voyage-log.md",
    "mqtt.md",
    "rao-csv.md",
    "vessel.md",
    "limits.md",
    "replay-outputs.md",
)


def _tracked_files() -> list[Path]:
    out = subprocess.run(["git", "ls-files", "-z"], cwd=ROOT, capture_output=True, check=True).stdout.decode(
        "utf-8"
    )
    return [ROOT / name for name in out.split("\0") if name]


def test_no_tracked_file_outside_docs_points_readers_to_the_outside_contract():
    offenders = []
    for path in _tracked_files():
        rel = path.relative_to(ROOT).as_posix()
        if rel.startswith("docs/") or not path.is_file():
            continue
        try:
            text = path.read_text(encoding="utf-8")
        except UnicodeDecodeError:  # binary files (compressed demo voyage)
            continue
        for n, line in enumerate(text.splitlines(), 1):
            if OLD_CONTRACT in line:
                offenders.append(f"{rel}:{n}: {line.strip()[:80]}")
    assert not offenders, "point to docs/ instead:\n" + "\n".join(offenders)


def test_every_format_is_documented_in_docs():
    for name in FORMAT_DOCS:
        assert (ROOT / "docs" / name).is_file(), name
    text = (ROOT / "docs" / "replay-outputs.md").read_text(encoding="utf-8")
    for output in ("estimates.csv", "advice.csv", "envelope.csv", "skipped.txt", "replay.db", "report.html"):
        assert f"`{output}`" in text, output
    mqtt = (ROOT / "docs" / "mqtt.md").read_text(encoding="utf-8")
    for schema in ("hw-samples/1", "hw-seastate/1", "hw-advice/1", "hw-health/1"):
        assert schema in mqtt, schema


def test_replay_columns_in_the_code_are_the_documented_ones():
    from onboard.ashore.replay import ADVICE_COLUMNS, ESTIMATE_COLUMNS

    text = (ROOT / "docs" / "replay-outputs.md").read_text(encoding="utf-8")
    for col in ESTIMATE_COLUMNS + ADVICE_COLUMNS:
        if col.startswith(
            ("system1_", "system2_")
        ):  # documented as ranges: `system1_label` … `system1_from_deg`
            assert f"`{col.split('_', 1)[0]}_label`" in text and f"`{col.split('_', 1)[0]}_from_deg`" in text
            continue
        assert f"`{col}`" in text, col


def _links(text: str) -> list[str]:
    """Relative targets of Markdown links and back-quoted paths."""
    md = re.findall(r"\]\(([^)#\s]+)(?:#[^)]*)?\)", text)
    return [t for t in md if not re.match(r"[a-z]+://", t)]


def test_every_docs_link_in_the_readmes_resolves():
    seen = 0
    for readme in (ROOT / "README.md", ROOT / "config" / "README.md", ROOT / "replay_data" / "README.md"):
        text = readme.read_text(encoding="utf-8")
        for t in [t for t in _links(text) if "docs/" in t]:  # Markdown links, relative to the README
            seen += 1
            assert (readme.parent / t).resolve().exists(), f"{readme.relative_to(ROOT)}: {t} does not exist"
        for t in re.findall(r"`(docs/[^`\s]*)`", text):  # back-quoted paths, relative to the repository
            seen += 1
            assert (ROOT / t).exists(), f"{readme.relative_to(ROOT)}: {t} does not exist"
    assert seen >= 5  # the README sends readers to the formats


def test_links_inside_docs_resolve():
    for page in (ROOT / "docs").glob("*.md"):
        for t in _links(page.read_text(encoding="utf-8")):
            assert (page.parent / t).resolve().exists(), f"docs/{page.name}: {t}"


# The project's internal notes live outside the repository; product code names published sources instead
# (authors, title, year, section), or says "common practice", "project choice" or "measured here".
# The notes' provenance tags [M] and [D] become "from memory" and "derived from ..., not a published number".
_INTERNAL_NOTES = re.compile(
    r"brief §|brief[:(]|brief Q\d|wave-buoy(-analogy)? brief|project references|shared/|references/"
    r"|reference-libraries|criteria-and-check-values|\[D\]|\[M\]"
)


def test_product_code_cites_published_sources_not_the_internal_notes():
    offenders = []
    for path in _tracked_files():
        rel = path.relative_to(ROOT).as_posix()
        if not rel.startswith(("onboard/", "advisor/", "benchmarks/", "estimator/")) or not path.is_file():
            continue
        try:
            text = path.read_text(encoding="utf-8")
        except UnicodeDecodeError:
            continue
        for n, line in enumerate(text.splitlines(), 1):
            if _INTERNAL_NOTES.search(line):
                offenders.append(f"{rel}:{n}: {line.strip()[:80]}")
    assert not offenders, "name the published source instead:\n" + "\n".join(offenders)

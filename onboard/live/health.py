"""Sensor health for the service: which channels can be trusted now, and can advice be given at all.

The per-channel checks are :meth:`onboard.live.buffer.SampleBuffer.channel_health` (missing, silent, frozen,
implausible; common practice for sensor monitoring). This module turns that list into a decision:

* a required channel that is not ``ok`` is a *problem* (shown on the page and raised as a caution);
* advice needs at least two healthy motion channels of roll, pitch and heave (docs/voyage-log.md: the
  voyage log needs two of the three) and a healthy heading and speed through water; otherwise the cycle
  is stored as ``no_advice`` with a plain reason such as ``sensors silent: roll_deg, pitch_deg since
  23:41Z`` and the page shows no advice instead of old advice;
* unhealthy channels are blanked from the analysis window (:func:`blank_unhealthy`), so a frozen or
  dead sensor never feeds the estimate.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import datetime

import numpy as np
import pandas as pd

from onboard.live.settings import MOTION_CHANNELS, NAV_CHANNELS

PROBLEM_ORDER = ("silent", "frozen", "implausible", "missing")


@dataclass(frozen=True)
class HealthReport:
    """Sensor health at one time.

    Attributes
    ----------
    time : datetime
        Reference time (UTC).
    channels : list of dict
        Per-channel entries ``{"channel", "status", "last_utc", "age_s", "detail"}`` (page ``sensors``).
    problems : dict of str to str
        Required channels that are not ``ok``: channel -> status.
    usable_motion : tuple of str
        Healthy motion channels among roll_deg, pitch_deg, heave_m.
    advice_possible : bool
        Enough healthy channels for an analysis (module docstring).
    reason : str or None
        Why advice is not possible (None when it is).
    """

    time: datetime
    channels: list[dict]
    problems: dict[str, str] = field(default_factory=dict)
    usable_motion: tuple[str, ...] = ()
    advice_possible: bool = False
    reason: str | None = None

    def summary(self) -> str:
        """One line naming the problem channels by status, e.g. ``silent: roll_deg since 23:41Z``."""
        return describe_problems(self.channels, self.problems)


def _hhmm(last_utc: object) -> str:
    if not isinstance(last_utc, str) or "T" not in last_utc:
        return ""
    return f" since {last_utc[11:16]}Z"


def describe_problems(channels: Sequence[Mapping], problems: Mapping[str, str]) -> str:
    """Plain text such as ``silent: roll_deg, pitch_deg since 23:41Z; frozen: heave_m``."""
    by = {c["channel"]: c for c in channels}
    parts = []
    for status in PROBLEM_ORDER:
        names = [ch for ch, st in problems.items() if st == status]
        if not names:
            continue
        lasts = [by[n].get("last_utc") for n in names if by.get(n, {}).get("last_utc")]
        since = _hhmm(max(lasts)) if status == "silent" and lasts else ""
        parts.append(f"{status}: {', '.join(names)}{since}")
    return "; ".join(parts)


def assess(
    channel_health: Sequence[Mapping],
    now: datetime,
    *,
    required: Sequence[str] = MOTION_CHANNELS + NAV_CHANNELS,
) -> HealthReport:
    """Decide from the per-channel health list whether advice is possible.

    Parameters
    ----------
    channel_health : sequence of mapping
        From :meth:`onboard.live.buffer.SampleBuffer.channel_health` for (at least) the required channels.
    now : datetime
        Reference time (UTC).
    required : sequence of str
        Channels the vessel is expected to send (settings ``health.required``).
    """
    entries = [dict(c) for c in channel_health]
    status = {c["channel"]: c["status"] for c in entries}
    problems = {ch: status.get(ch, "missing") for ch in required if status.get(ch, "missing") != "ok"}
    motion = tuple(ch for ch in MOTION_CHANNELS if status.get(ch) == "ok")
    nav_bad = {ch: problems[ch] for ch in NAV_CHANNELS if ch in problems}
    motion_bad = {ch: st for ch, st in problems.items() if ch in MOTION_CHANNELS}
    possible = len(motion) >= 2 and not nav_bad
    reason = None
    if not possible:
        bad = dict(motion_bad) if len(motion) < 2 else {}
        bad.update(nav_bad)
        reason = "sensors " + describe_problems(entries, bad).replace("; ", "; sensors ")
    return HealthReport(
        time=now,
        channels=entries,
        problems=problems,
        usable_motion=motion,
        advice_possible=possible,
        reason=reason,
    )


def blank_unhealthy(frame: pd.DataFrame, report: HealthReport) -> pd.DataFrame:
    """The window with every problem channel set to NaN (not measured), so it never feeds the estimate."""
    bad = [c for c in report.problems if c in frame.columns]
    if not bad:
        return frame
    out = frame.copy()
    out[bad] = np.nan
    return out

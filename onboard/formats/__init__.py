"""File and message formats at the edge of the system, and the unit conversions done there.

Voyage logs (:mod:`.voyagelog`), RAO tables (:mod:`.raofile`), vessel files (:mod:`.vessel`), limit sets
(:mod:`.limitsfile`), live sensor messages (:mod:`.messages`) and degrees/knots to SI (:mod:`.units`).
The formats themselves are documented in ``docs/formats.md``. Imports nothing else from ``onboard``.
"""

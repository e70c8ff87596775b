"""Replay of voyage logs ashore: one log (:mod:`.replay`), many logs (:mod:`.fleet`), the report
(:mod:`.report`). Imports :mod:`onboard.formats` and :mod:`onboard.core`, never the live service."""

"""Administration of loading conditions and motion limits.

Stored conditions and limits (:mod:`.limitstore`), users and logins (:mod:`.auth`), the append-only
audit trail (:mod:`.audit`), their database tables and migrations (:mod:`.tables`), and the
``limits``/``condition``/``users``/``audit`` commands (:mod:`.commands`). Imports :mod:`onboard.formats`
and :mod:`onboard.core`, never the live service or replay.
"""

"""The window-to-advice engine (:mod:`.engine`) and the results database (:mod:`.store`).

Shared by the live service (:mod:`onboard.live`) and replay ashore (:mod:`onboard.ashore`); imports only
:mod:`onboard.formats` from ``onboard``.
"""

"""The live service on board.

MQTT listener (:mod:`.listener`), sample buffer (:mod:`.buffer`), sensor health (:mod:`.health`), alerts
(:mod:`.alerts`), settings (:mod:`.settings`), the state shown on the page (:mod:`.stateview`), the bridge
page and its API (:mod:`.web`), and the composition root with the ``run`` and ``demo`` commands
(:mod:`.service`).
"""

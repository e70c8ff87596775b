"""Everything around the pure computation of :mod:`estimator` and :mod:`advisor`.

Sub-packages, each a part of the system (DEVELOPERS.md has the map and the import rules):

* :mod:`onboard.formats` - the file and message formats: voyage logs, RAO tables, vessel and limit files,
  live sensor messages, and the unit conversions at the edge;
* :mod:`onboard.core` - the window-to-advice engine and the results database, shared by the live service
  and replay ashore;
* :mod:`onboard.admin` - the administration of loading conditions and limits: stored limits, users and
  the audit trail, and their commands;
* :mod:`onboard.live` - the live service on board: MQTT listener, sample buffer, sensor health, alerts,
  settings and the bridge page;
* :mod:`onboard.ashore` - replay of voyage logs ashore: one log, many logs, and the report.

:mod:`onboard.cli` is the one place where the command line is wired.
"""

"""A whole run of rulecheck: which specs, under which configuration, with which rules, checked where.

- :mod:`~rulecheck.run.options` — what the command line asks (:class:`RunOptions`), :class:`UsageError`;
- :mod:`~rulecheck.run.discovery` — spec files, configurations per folder, changed-only runs;
- :mod:`~rulecheck.run.preparation` — rules loaded, compiled and linted once per configuration (code cache);
- :mod:`~rulecheck.run.cached` — cache keys of spec results, checking a spec into the cache;
- :mod:`~rulecheck.run.workers` — worker processes, sixteen specs per task; :mod:`~rulecheck.run.pool` the
  only place that touches the process pool's internals;
- :mod:`~rulecheck.run.streaming` — the run itself: results in order, from the cache, workers or here.
"""

from rulecheck.run.discovery import changed_files, collect_specs
from rulecheck.run.options import RunOptions, UsageError
from rulecheck.run.preparation import Prepared, prepare
from rulecheck.run.streaming import Stream, run, run_stream, run_with_charts

__all__ = ["Prepared", "RunOptions", "Stream", "UsageError", "changed_files", "collect_specs", "prepare", "run",
           "run_stream", "run_with_charts"]

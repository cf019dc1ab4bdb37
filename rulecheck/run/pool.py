"""The two places where a run reaches into CPython's process pool, kept here and nowhere else.

``concurrent.futures.ProcessPoolExecutor`` offers no public way to do either:

- widen the pipe that carries results back (``pool._result_queue._reader``): the parent shares the cores with
  the workers; with the system's 64 KiB pipe a worker whose batch of results is larger waits, idle, until the
  parent is scheduled again;
- end the workers at once on Ctrl-C (``pool._processes``): ``shutdown(cancel_futures=True)`` still waits for
  the specs being checked, which may take the whole spec time limit;
- tell, on Ctrl-C, whether a pool is still running (its manager thread, ``_ExecutorManagerThread``), so the
  command line can end the workers and leave at once rather than wait in the pool's exit handler.

Both degrade to the public behaviour when the attribute is missing (another Python, a changed pool).
"""

from __future__ import annotations

from concurrent.futures import ProcessPoolExecutor

__all__ = ["stop", "widen_result_pipe", "workers_running"]


def widen_result_pipe(pool: ProcessPoolExecutor) -> None:
    """Let a worker hand back a few batches of results without waiting for the parent to read them.

    Linux lets a pipe hold up to /proc/sys/fs/pipe-max-size (1 MiB by default); elsewhere, or if refused,
    the pipe stays as it is.
    """
    try:
        import fcntl

        reader = pool._result_queue._reader  # type: ignore[attr-defined]
        fcntl.fcntl(reader.fileno(), getattr(fcntl, "F_SETPIPE_SZ", 1031), 1 << 20)
    except (ImportError, AttributeError, OSError, ValueError):
        pass


def stop(pool: ProcessPoolExecutor) -> None:
    """Stop a pool at once (Ctrl-C): cancel what is queued and end the workers."""
    processes = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for process in processes:
        process.terminate()
    for process in processes:
        process.join(timeout=5)


def workers_running() -> bool:
    """Return whether a process pool of this process is still running (its manager thread is alive)."""
    import threading

    return any(type(t).__name__ == "_ExecutorManagerThread" for t in threading.enumerate())

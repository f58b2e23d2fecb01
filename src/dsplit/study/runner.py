"""Run a study's tasks: serially, on a local process pool, or on a Dask cluster.

Every task goes through the archived compute the caller hands in
(``dsplit.api.compute.compute_archived``, a module-level function so that worker
processes can import it), so finished runs are cache hits, a run being computed by another process is waited for,
and results land in the same archive whatever the executor.  With a remote
scheduler the archive path must be the same shared folder on every worker.
"""

from __future__ import annotations

import os
import time
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError

EXECUTORS = ("local", "dask")
_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def machine_cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        return os.cpu_count() or 1


def parallelism(n_tasks: int, workers: int | None, threads: int | None, cores: int | None = None) -> tuple[int, int]:
    """(workers, threads per worker) that fit the machine.

    Default: as many single-threaded workers as cores (small SCFs scale better
    across processes than across threads — common practice), never more workers
    than tasks; the spare cores go to threads.  Given one, the other fills the cores.
    """
    cores = cores or machine_cores()
    for flag, v in (("--workers", workers), ("--threads", threads)):
        if v is not None and v < 1:
            raise InputError(flag, "must be ≥ 1")
    if workers is None and threads is None:
        workers = max(1, min(cores, n_tasks))
    if workers is None:
        workers = max(1, min(n_tasks, cores // threads))
    if threads is None:
        threads = max(1, cores // workers)
    return workers, threads


def execute_task(spec_doc: dict[str, Any], run_id: str, archive: str, threads: int,
                 compute_archived: Callable) -> dict[str, Any]:
    """Run one task through the archive; a summary dict (never raises for a failed run)."""
    from dsplit.errors import CalculationError
    from dsplit.spec import spec_from_dict

    t0 = time.perf_counter()
    out: dict[str, Any] = {"name": spec_doc.get("name"), "run_id": run_id}
    try:
        run = compute_archived(spec_from_dict(spec_doc), archive, threads=threads)
    except (InputError, CalculationError) as exc:
        return {**out, "state": "failed", "error": str(exc), "seconds": time.perf_counter() - t0}
    except Exception as exc:  # a crash in one task must not stop the study
        return {**out, "state": "failed", "error": f"{type(exc).__name__}: {exc}", "seconds": time.perf_counter() - t0}
    res = run.result
    state = "cached" if run.cached else ("computed" if run.exit_code == 0 else "not verified")
    out.update(state=state, seconds=time.perf_counter() - t0, folder=str(run.out_dir), run_id=run.run_id)
    split = res.get("splitting") or {}
    for est in PREFERRED_ESTIMATORS:  # state energies are what spectra measure; orbital gaps last
        block = split.get(est)
        if isinstance(block, dict) and isinstance(block.get("delta_eV"), (int, float)):
            out.update(delta_eV=block["delta_eV"], delta_estimator=est)
            break
    return out


#: the estimator shown in the live summary: the first with a value
PREFERRED_ESTIMATORS = ("state", "excitation", "orbital")


def _init_worker(threads: int) -> None:
    for var in _THREAD_VARS:
        os.environ[var] = str(threads)


def _run_serial(tasks, archive: str, threads: int, report: Callable, compute: Callable) -> None:
    for t in tasks:
        report(execute_task(t.spec, t.run_id, archive, threads, compute))


def _run_pool(tasks, archive: str, workers: int, threads: int, report: Callable, compute: Callable) -> None:
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    pool = ProcessPoolExecutor(max_workers=workers, mp_context=mp.get_context("spawn"),
                               initializer=_init_worker, initargs=(threads,))
    try:
        futures = [pool.submit(execute_task, t.spec, t.run_id, archive, threads, compute) for t in tasks]
        for f in as_completed(futures):
            report(f.result())
    except BrokenProcessPool as exc:
        pool.shutdown(wait=False, cancel_futures=True)
        raise RuntimeError("a study worker process died or could not start; a script that runs a study with "
                           "more than one worker needs an `if __name__ == '__main__':` guard "
                           "(multiprocessing 'spawn')") from exc
    except BaseException:  # Ctrl-C: stop now; a killed worker's half-written run is never listed
        for proc in list(getattr(pool, "_processes", {}).values()):  # queued calls would run otherwise
            proc.terminate()
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)


def dask_client(scheduler: str | None, workers: int, timeout: str = "15s"):
    """A distributed.Client: to ``scheduler``, or to a LocalCluster of processes on 127.0.0.1."""
    try:
        import logging

        from distributed import Client, LocalCluster
    except ImportError:
        raise InputError("--executor", "dask needs the optional extra: pip install 'dsplit[dask]' "
                                       "(dask and distributed)") from None
    if scheduler:
        try:
            return Client(scheduler, timeout=timeout), None
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError("--scheduler", f"cannot reach the Dask scheduler at {scheduler!r} ({exc})") from None
    cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=None, silence_logs=logging.ERROR)
    return Client(cluster), cluster


def _run_dask(tasks, archive: str, workers: int, threads: int, scheduler: str | None, report: Callable,
              compute: Callable) -> None:
    from distributed import as_completed

    client, cluster = dask_client(scheduler, workers)
    try:
        futures = [client.submit(execute_task, t.spec, t.run_id, archive, threads, compute, key=f"dsplit-{t.run_id}",
                                 pure=False) for t in tasks]
        try:
            for f in as_completed(futures):
                report(f.result())
        except BaseException:
            client.cancel(futures)
            raise
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def run_tasks(tasks, archive: Path, *, workers: int, threads: int, executor: str = "local",
              scheduler: str | None = None, report: Callable[[dict[str, Any]], None],
              compute: Callable) -> None:
    """Run ``tasks`` (expand.Task) with ``compute`` (an archived compute) and call ``report(outcome)``."""
    if executor not in EXECUTORS:
        raise InputError("--executor", f"allowed: {', '.join(EXECUTORS)}")
    if scheduler and executor != "dask":
        raise InputError("--scheduler", "only with --executor dask")
    if not tasks:
        return
    if executor == "dask":
        _run_dask(tasks, str(archive), workers, threads, scheduler, report, compute)
    elif workers == 1:
        _run_serial(tasks, str(archive), threads, report, compute)
    else:
        _run_pool(tasks, str(archive), workers, threads, report, compute)

"""A dask.distributed client for the Dask ranking engine: a local cluster, or an existing one.

Needs the optional extra ``ptaconstrain[scale]`` (imported inside :func:`dask_client`).
A local cluster runs ``workers`` processes of one thread each with a memory
limit per worker (spilling to disk before it); an existing cluster is reached
at its scheduler address, within a short timeout, or refused with one line.
"""

import contextlib

from ..errors import InputError

__all__ = [
    "ClusterError",
    "dask_client",
    "local_worker_config",
    "DEFAULT_MEMORY_LIMIT",
    "CONNECT_TIMEOUT",
]

#: memory limit of each local worker (Dask spills to disk well before it)
DEFAULT_MEMORY_LIMIT = "2GB"
#: seconds to wait for a scheduler given by address
CONNECT_TIMEOUT = 5.0


def local_worker_config():
    """Dask settings for the workers of a local cluster (a dict for ``dask.config.set``).

    * The workers' statistical profiler (a sample every 10 ms) is off: CPU the
      ranking needs.
    * The nanny's ``MALLOC_TRIM_THRESHOLD_`` is not passed to the workers.  Setting
      it (Dask sets 65536) turns off glibc's dynamic mmap threshold (mallopt(3)),
      so every numpy temporary above 128 KiB is mapped and unmapped afresh: the
      ranking kernel ran 2.9 x slower in CPU time that way (350,000 rows,
      2026-12-02).  The BLAS thread limits stay (one thread per worker).

    Returns
    -------
    dict

    Examples
    --------
    >>> cfg = local_worker_config()
    >>> cfg["distributed.worker.profile.enabled"]
    False
    >>> "MALLOC_TRIM_THRESHOLD_" in cfg["distributed.nanny.pre-spawn-environ"]
    False
    """
    import dask

    environ = dict(dask.config.get("distributed.nanny.pre-spawn-environ", {}))
    environ.pop("MALLOC_TRIM_THRESHOLD_", None)
    return {
        "distributed.worker.profile.enabled": False,
        "distributed.nanny.pre-spawn-environ": environ,
    }


class ClusterError(InputError):
    """A Dask cluster that cannot be started or reached; the message names the fix."""


@contextlib.contextmanager
def dask_client(
    workers=2, scheduler=None, memory_limit=DEFAULT_MEMORY_LIMIT, timeout=CONNECT_TIMEOUT
):
    """Context manager yielding a ``distributed.Client``, closed (and its cluster stopped) after.

    Parameters
    ----------
    workers : int
        Worker processes of a local cluster (one thread each).
    scheduler : str, optional
        Address of an existing scheduler (e.g. ``tcp://10.0.0.5:8786``); no
        local cluster is started then.
    memory_limit : str
        Per local worker.
    timeout : float
        Seconds to wait for ``scheduler``.

    Raises
    ------
    ClusterError
        When the scheduler cannot be reached in time, or a local cluster cannot start.
    """
    import logging

    from .columnar import require_scale

    require_scale("the Dask engine", ("pyarrow", "dask", "distributed"))
    from distributed import Client, LocalCluster

    cluster = None
    try:
        if scheduler:
            client = Client(str(scheduler), timeout=f"{float(timeout)}s", set_as_default=True)
        else:
            import dask

            with dask.config.set(local_worker_config()):
                cluster = LocalCluster(
                    n_workers=int(workers),
                    threads_per_worker=1,
                    processes=True,
                    memory_limit=memory_limit,
                    dashboard_address=None,  # no dashboard: nobody watches it
                    # the scheduler's small HTTP server (health, metrics) on a free local
                    # port: on its default 8787 it would meet (and warn about) any other
                    # Dask cluster or notebook dashboard running on the machine
                    scheduler_kwargs={"dashboard_address": "127.0.0.1:0"},
                    silence_logs=logging.ERROR,
                )
            client = Client(cluster, set_as_default=True)
    except (OSError, TimeoutError, ValueError) as err:
        if cluster is not None:
            cluster.close()
        if scheduler:
            raise ClusterError(
                f"Dask scheduler {scheduler} cannot be reached within {float(timeout):g} s: "
                "check the address (e.g. tcp://host:8786) or drop --scheduler to start a "
                "local cluster"
            ) from err
        raise ClusterError(
            f"cannot start a local Dask cluster of {workers} workers ({err}); try fewer --workers"
        ) from err
    try:
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()

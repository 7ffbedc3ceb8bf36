"""A dask.distributed client for the Dask ranking engine: a local cluster, or an existing one.

Needs the optional extra ``ptaconstrain[scale]`` (imported inside :func:`dask_client`).
A local cluster runs ``workers`` processes of one thread each with a memory
limit per worker (spilling to disk before it); an existing cluster is reached
at its scheduler address, within a short timeout, or refused with one line.
"""

import contextlib

from ..errors import InputError

__all__ = ["ClusterError", "dask_client", "DEFAULT_MEMORY_LIMIT", "CONNECT_TIMEOUT"]

#: memory limit of each local worker (Dask spills to disk well before it)
DEFAULT_MEMORY_LIMIT = "2GB"
#: seconds to wait for a scheduler given by address
CONNECT_TIMEOUT = 5.0


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

            # the workers' statistical profiler samples every 10 ms: CPU the ranking needs
            with dask.config.set({"distributed.worker.profile.enabled": False}):
                cluster = LocalCluster(
                    n_workers=int(workers),
                    threads_per_worker=1,
                    processes=True,
                    memory_limit=memory_limit,
                    dashboard_address=":0",
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

"""Running the portfolio's per-site function on a Dask distributed cluster.

Imported only for ``schedcheck portfolio --scheduler ADDRESS``: dask and distributed are the
optional extra ``schedcheck[cluster]``. The same function runs as in the local pool
(:func:`schedcheck.jobs.portfolio.audit_for_portfolio`), so the figures are identical.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator

from schedcheck.errors import InputError


def run_on_cluster(func: Callable, tasks: list, address: str,
                   connect_timeout: str = "30s") -> Iterator[tuple[int, dict]]:
    """Yield ``(task index, result)`` as each task finishes on the cluster at ``address``.

    ``connect_timeout`` [duration]: common practice, no source (distributed's own default is
    similar).
    """
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise InputError("needs dask and distributed: pip install 'schedcheck[cluster]'",
                         key="--scheduler") from None
    try:
        client = Client(address, timeout=connect_timeout)
    except (OSError, TimeoutError, ValueError) as e:
        raise InputError(f"cannot reach the scheduler at {address} ({e})",
                         key="--scheduler") from None
    try:
        # pure=False: a site's files may change between runs under the same arguments
        futures = client.map(func, tasks, pure=False)
        index = {f.key: i for i, f in enumerate(futures)}
        for fut in as_completed(futures):
            yield index[fut.key], fut.result()
    finally:
        client.close()

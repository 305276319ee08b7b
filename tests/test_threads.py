"""Bounded threads: worker processes x BLAS threads stay within the CPUs."""

import os
from concurrent.futures import ProcessPoolExecutor

from threadpoolctl import threadpool_info

from flickerkit.batch import _worker_init, default_workers


def _blas_threads() -> list[int]:
    return [lib["num_threads"] for lib in threadpool_info() if lib["user_api"] == "blas"]


def test_workers_times_threads_fit_the_cpus():
    cpus = default_workers()
    for workers in (1, 2, cpus + 1):
        with ProcessPoolExecutor(max_workers=1, initializer=_worker_init,
                                 initargs=(os.getpid(), workers)) as pool:
            threads = pool.submit(_blas_threads).result()
        assert threads, "numpy's BLAS is visible to threadpoolctl"
        assert all(t == max(1, cpus // workers) for t in threads), (workers, threads)


def test_period_fit_runs_on_one_blas_thread(monkeypatch):
    # the least-squares fit of a short capture's period runs inside the one-thread context
    import numpy as np

    from flickerkit import periodicity

    seen = []
    real = np.linalg.lstsq

    def spy(*args, **kwargs):
        seen.append(max(_blas_threads()))
        return real(*args, **kwargs)

    monkeypatch.setattr(np.linalg, "lstsq", spy)
    t = np.arange(4000) / 100_000.0
    p = periodicity.fundamental_frequency(1 + 0.4 * np.sin(2 * np.pi * 1234.56 * t), 100_000.0)
    assert seen and set(seen) == {1}
    # analytic: the sine's frequency (0.05 % as in test_periodicity)
    assert abs(p.frequency_hz / 1234.56 - 1) < 5e-4

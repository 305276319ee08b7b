"""The batch map on a Dask LocalCluster gives the same results in the same order.

Needs the optional extra (``pip install '.[distributed]'``); skipped otherwise. CI
installs the extra in a step of its own and runs this file.
"""

import json

import numpy as np
import pytest

distributed = pytest.importorskip("distributed")

from flickerkit.assess import AssessSettings  # noqa: E402
from flickerkit.batch import measure_many  # noqa: E402
from flickerkit.readers import ReadOptions  # noqa: E402

from .synth import pwm  # noqa: E402

FS = 20_000.0


@pytest.mark.filterwarnings("ignore::DeprecationWarning")
@pytest.mark.filterwarnings("ignore::ResourceWarning")
@pytest.mark.filterwarnings("ignore::pytest.PytestUnraisableExceptionWarning")
@pytest.mark.filterwarnings("ignore::UserWarning")
def test_dask_local_cluster_matches_local_workers(tmp_path):
    paths = []
    for i, duty in enumerate((0.1, 0.4, 0.7, 0.9)):
        p = tmp_path / f"c{i}.npy"
        np.save(p, pwm(200.0 + 50 * i, duty, 0.0, FS, 0.3))
        paths.append(str(p))
    (tmp_path / "bad.npy").write_bytes(b"not numpy")
    paths.append(str(tmp_path / "bad.npy"))
    opts, st = ReadOptions(sample_rate_hz=FS), AssessSettings()
    local = measure_many(paths, opts, st, workers=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster:
        remote = measure_many(paths, opts, st, scheduler=cluster.scheduler_address)
    assert [o.path for o in remote] == paths
    assert json.dumps([o.record for o in remote]) == json.dumps([o.record for o in local])
    assert remote[-1].record is None and remote[-1].error == local[-1].error
    # analytic: FI = 1 - D (interval-averaged PWM, 2 % for edge samples as in test_batch)
    np.testing.assert_allclose([o.record["flicker_index"] for o in remote[:4]],
                               [0.9, 0.6, 0.3, 0.1], rtol=0.02)


def test_unreachable_scheduler_is_one_clear_line(tmp_path, capsys):
    from flickerkit.cli import main

    p = tmp_path / "c.npy"
    np.save(p, pwm(200.0, 0.5, 0.0, FS, 0.3))
    assert main(["measure", str(p), "-r", str(FS), "-q", "--scheduler", "tcp://127.0.0.1:9"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "cannot reach the scheduler" in err[0]

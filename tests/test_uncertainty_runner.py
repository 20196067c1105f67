"""Chunked runs: the same result in-process, on a process pool and on a real Dask cluster;
checkpoints that resume, are never mixed and are written atomically; failing chunks and dead
workers retried or reported exactly.

Reference for every equality here: the same model run in this process on the whole input in one
call (an independent path through the code); faults are injected by the models below. The
cluster is a real distributed.LocalCluster (worker processes, nannies) started by the tests.
"""

import os
import pickle
from concurrent.futures import ProcessPoolExecutor

import numpy as np
import pandas as pd
import pytest

from teakit.errors import InputError
from teakit.uncertainty import BatchError, CheckpointError, run_batches
from teakit.uncertainty.runner import default_chunk_size, input_key

N = 60


def inputs(n=N, seed=0):
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"i": np.arange(n), "x": rng.random(n), "z": rng.normal(size=n)})


# -- models (module level so worker processes can unpickle them) --------------------------------
def model(df):
    x, z = df["x"].to_numpy(), df["z"].to_numpy()
    return pd.DataFrame({"y": x**2 + np.sin(z), "n": (df["i"] * 3).to_numpy(), "label": np.where(x > 0.5, "high", "low"),
                         "ok": x < 0.9})


class FailFirstTime:
    """Raises the first time it sees a chunk whose first row is in ``targets`` (in-process)."""

    def __init__(self, targets):
        self.targets, self.seen = set(targets), set()

    def __call__(self, df):
        first = int(df["i"].iloc[0])
        if first in self.targets and first not in self.seen:
            self.seen.add(first)
            raise RuntimeError(f"transient failure at row {first}")
        return model(df)


class AlwaysFail:
    """Fails for every chunk that holds row ``row``; counts calls in ``calls`` (in-process)."""

    def __init__(self, row):
        self.row = row
        self.calls = 0

    def __call__(self, df):
        self.calls += 1
        if (df["i"] == self.row).any():
            raise ValueError(f"bad input at row {self.row}")
        return model(df)


class ExitOnce:
    """Kills its own worker process (os._exit) the first time it sees a target chunk."""

    def __init__(self, marks, targets):
        self.marks, self.targets = str(marks), set(targets)

    def __call__(self, df):
        first = int(df["i"].iloc[0])
        mark = os.path.join(self.marks, f"seen-{first}")
        if first in self.targets and not os.path.exists(mark):
            open(mark, "w").close()
            os._exit(17)
        return model(df)


class Counting:
    def __init__(self):
        self.chunks = []

    def __call__(self, df):
        self.chunks.append(int(df["i"].iloc[0]))
        return model(df)


@pytest.fixture(scope="module")
def reference():
    return model(inputs())  # one call on every row


@pytest.fixture(scope="module")
def dask_client():
    pytest.importorskip("distributed")
    from teakit.uncertainty import local_cluster

    with local_cluster(2) as client:
        yield client


@pytest.fixture(scope="module")
def dask_executor(dask_client):
    return dask_client.get_executor()


def _worker_environment():
    import os

    return {k: os.environ.get(k) for k in ("MALLOC_TRIM_THRESHOLD_", "OMP_NUM_THREADS")}


def test_local_cluster_workers_keep_the_default_allocator(dask_client):
    # distributed sets MALLOC_TRIM_THRESHOLD_=65536 in its workers by default, which also fixes
    # glibc's mmap threshold (mallopt(3)): numpy temporaries above 128 kB are then mapped and
    # unmapped on every allocation. local_cluster leaves it unset; threads stay at one.
    env = dask_client.run(_worker_environment)
    assert len(env) == 2
    for e in env.values():
        assert e["MALLOC_TRIM_THRESHOLD_"] is None and e["OMP_NUM_THREADS"] == "1"
    assert all(w["nthreads"] == 1 for w in dask_client.scheduler_info()["workers"].values())
    from teakit.uncertainty import local_cluster

    with pytest.raises(InputError, match="n_workers must be a whole number from 1 to 256"):
        with local_cluster(0):
            pass


def test_in_process_chunks_equal_one_call(reference):
    out = run_batches(model, inputs(), chunk_size=7, progress=True)  # with the tqdm.auto bar
    pd.testing.assert_frame_equal(out, reference, check_exact=True)
    assert out.attrs["n_chunks"] == 9 and out.attrs["computed_chunks"] == 9


def test_process_pool_gives_identical_results(reference):
    with ProcessPoolExecutor(max_workers=2) as ex:
        out = run_batches(model, inputs(), executor=ex, chunk_size=7, progress=False)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)


def test_dask_cluster_gives_identical_results(reference, dask_executor):
    out = run_batches(model, inputs(), executor=dask_executor, chunk_size=7, progress=False)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)


def test_dask_worker_killed_mid_run_still_completes_identically(reference, dask_executor, tmp_path):
    # The worker process running chunk 2 (rows 14-20) dies on its first try; the cluster's nanny
    # restarts it and the chunk runs again; every finished chunk is checkpointed meanwhile.
    m = ExitOnce(tmp_path, targets=[14])
    out = run_batches(m, inputs(), executor=dask_executor, chunk_size=7, progress=False,
                      checkpoint=tmp_path / "ck", retries=2)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)
    assert (tmp_path / "seen-14").exists()  # the kill really happened


def test_dask_failing_chunk_is_reported_exactly(dask_executor, tmp_path):
    inp = inputs()
    with pytest.raises(BatchError) as err:
        run_batches(AlwaysFail(row=30), inp, executor=dask_executor, chunk_size=7, progress=False,
                    retries=1, checkpoint=tmp_path / "ck")
    e = err.value
    assert e.failed == [4]  # rows 28-34 hold row 30
    assert e.rows[4] == (28, 34) and e.inputs[4]["i"].tolist() == list(range(28, 35))
    assert "bad input at row 30" in e.reasons[4] and "chunk 4 (rows 28-34)" in str(e)
    assert sorted(int(p.stem.split("-")[1]) for p in (tmp_path / "ck").glob("chunk-*.parquet")) == [0, 1, 2, 3, 5, 6, 7, 8]


def test_process_pool_worker_killed_reports_then_resumes(reference, tmp_path):
    # A dead worker breaks a ProcessPoolExecutor for good: every unfinished chunk is reported
    # (exactly those without a checkpoint file); a new pool then finishes the run identically.
    ck = tmp_path / "ck"
    with ProcessPoolExecutor(max_workers=2) as ex, pytest.raises(BatchError, match="run again with a new pool") as err:
        run_batches(ExitOnce(tmp_path, targets=[14]), inputs(), executor=ex, chunk_size=7, checkpoint=ck, progress=False)
    saved = {int(p.stem.split("-")[1]) for p in ck.glob("chunk-*.parquet")}
    assert 2 in err.value.failed and set(err.value.failed) == set(range(9)) - saved
    with ProcessPoolExecutor(max_workers=2) as ex:
        out = run_batches(ExitOnce(tmp_path, targets=[14]), inputs(), executor=ex, chunk_size=7, checkpoint=ck,
                          progress=False)
    assert out.attrs["resumed_chunks"] == len(saved)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)


def test_retry_recovers_a_transient_failure(reference):
    out = run_batches(FailFirstTime([14, 42]), inputs(), chunk_size=7, retries=1, progress=False)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)
    with pytest.raises(BatchError) as err:  # without retries the same faults are reported
        run_batches(FailFirstTime([14, 42]), inputs(), chunk_size=7, retries=0, progress=False)
    assert err.value.failed == [2, 6]
    # Finished chunks are not lost: they travel with the error.
    part = err.value.partial
    assert len(part) == N - 14 and part.index.tolist() == [i for i in range(N) if not (14 <= i < 21 or 42 <= i < 49)]
    pd.testing.assert_frame_equal(part, reference.loc[part.index], check_exact=True)


def test_checkpoint_resumes_only_missing_chunks(reference, tmp_path):
    ck = tmp_path / "run"
    bad = AlwaysFail(row=30)
    with pytest.raises(BatchError, match="Finished chunks are kept in the checkpoint"):
        run_batches(bad, inputs(), chunk_size=7, retries=2, checkpoint=ck, progress=False)
    assert bad.calls == 8 + 3  # eight good chunks once, the bad one three times
    counting = Counting()
    out = run_batches(counting, inputs(), chunk_size=7, checkpoint=ck, progress=False)
    assert counting.chunks == [28]  # only the failed chunk is computed again
    assert out.attrs["resumed_chunks"] == 8 and out.attrs["computed_chunks"] == 1
    pd.testing.assert_frame_equal(out, reference, check_exact=True)
    again = Counting()  # a finished checkpoint: nothing to compute, same result
    pd.testing.assert_frame_equal(run_batches(again, inputs(), chunk_size=7, checkpoint=ck, progress=False), reference,
                                  check_exact=True)
    assert again.chunks == []
    assert not [p for p in ck.iterdir() if p.name.startswith(".tmp-")]  # no temporary files left


def test_mismatched_checkpoint_is_never_mixed(tmp_path):
    ck = tmp_path / "run"
    run_batches(model, inputs(seed=0), chunk_size=7, checkpoint=ck, progress=False)
    for kwargs in ({"chunk_size": 7, "key": "seed=2"}, {"chunk_size": 5}):
        with pytest.raises(CheckpointError, match="holds results of other inputs.*overwrite=True"):
            run_batches(model, inputs(seed=0), checkpoint=ck, progress=False, **kwargs)
    with pytest.raises(CheckpointError, match="holds results of other inputs"):
        run_batches(model, inputs(seed=1), chunk_size=7, checkpoint=ck, progress=False)
    # Existing output is replaced only when asked.
    out = run_batches(model, inputs(seed=1), chunk_size=7, checkpoint=ck, progress=False, overwrite=True)
    pd.testing.assert_frame_equal(out, model(inputs(seed=1)), check_exact=True)
    assert out.attrs["resumed_chunks"] == 0


def test_checkpoint_refuses_foreign_paths_and_detects_damage(tmp_path, reference):
    other = tmp_path / "notes"
    other.mkdir()
    (other / "thesis.txt").write_text("keep me")
    with pytest.raises(CheckpointError, match="not empty and has no manifest.json"):
        run_batches(model, inputs(), checkpoint=other, progress=False, overwrite=True)
    assert (other / "thesis.txt").read_text() == "keep me"
    afile = tmp_path / "file.parquet"
    afile.write_bytes(b"x")
    with pytest.raises(CheckpointError, match="exists and is a file"):
        run_batches(model, inputs(), checkpoint=afile, progress=False)
    ck = tmp_path / "run"
    run_batches(model, inputs(), chunk_size=7, checkpoint=ck, progress=False)
    # A temporary file left by a run killed while writing is ignored and removed.
    (ck / ".tmp-chunk-000003.parquet.123.456").write_bytes(b"PAR1 half")
    out = run_batches(model, inputs(), chunk_size=7, checkpoint=ck, progress=False)
    pd.testing.assert_frame_equal(out, reference, check_exact=True)
    assert not list(ck.glob(".tmp-*"))
    # A damaged chunk file (not written by the runner) is an error naming it, not a silent value.
    (ck / "chunk-000003.parquet").write_bytes(b"PAR1 broken")
    with pytest.raises(CheckpointError, match="chunk-000003.parquet.*cannot be read"):
        run_batches(model, inputs(), chunk_size=7, checkpoint=ck, progress=False)


def test_checkpoint_files_are_parquet_not_pickle(tmp_path):
    ck = tmp_path / "run"
    run_batches(model, inputs(), chunk_size=30, checkpoint=ck, progress=False)
    names = sorted(p.name for p in ck.iterdir())
    assert names == ["chunk-000000.parquet", "chunk-000001.parquet", "manifest.json"]
    for p in ck.glob("chunk-*.parquet"):
        raw = p.read_bytes()
        assert raw[:4] == b"PAR1" and raw[-4:] == b"PAR1"  # Apache Parquet magic at both ends


def test_model_errors_and_bad_arguments():
    with pytest.raises(BatchError, match="returned 1 rows for a chunk of 7"):
        run_batches(lambda df: model(df).iloc[:1], inputs(), chunk_size=7, retries=0, progress=False)
    with pytest.raises(BatchError, match="must return a pandas DataFrame, got ndarray"):
        run_batches(lambda df: df.to_numpy(), inputs(), chunk_size=30, retries=0, progress=False)
    with pytest.raises(InputError, match="inputs must be a non-empty pandas DataFrame"):
        run_batches(model, pd.DataFrame(), progress=False)
    with pytest.raises(InputError, match="chunk_size must be a whole number >= 1"):
        run_batches(model, inputs(), chunk_size=0, progress=False)
    with pytest.raises(InputError, match="retries must be a whole number from 0 to 100"):
        run_batches(model, inputs(), retries=-1, progress=False)
    with pytest.raises(InputError, match="executor must be a concurrent.futures.Executor"):
        run_batches(model, inputs(), executor="dask", progress=False)
    with pytest.raises(InputError, match="model must be a callable"):
        run_batches(3, inputs(), progress=False)
    with ProcessPoolExecutor(max_workers=1) as ex, pytest.raises(InputError, match="must be picklable"):
        run_batches(lambda df: df, inputs(), executor=ex, progress=False)


def test_key_and_default_chunking_depend_only_on_inputs():
    a, b = inputs(), inputs()
    assert input_key(a, 7, "s=1") == input_key(b, 7, "s=1")
    b.loc[5, "x"] += 1e-15
    assert input_key(a, 7, "s=1") != input_key(b, 7, "s=1")
    assert input_key(a, 7, "s=1") != input_key(a, 7, "s=2")
    assert [default_chunk_size(n) for n in (10, 1000, 10_000)] == [10, 64, 313]  # ceil(n / 32), >= 64 rows
    assert pickle.loads(pickle.dumps(ExitOnce("/tmp", [1]))).targets == {1}

"""Run a vectorised model over a long table of inputs in chunks: any executor, checkpoints, retries.

:func:`run_batches` splits the rows of an input DataFrame into chunks of ``chunk_size`` rows,
calls the model once per chunk (a callable DataFrame -> DataFrame with one output row per input
row) and concatenates the outputs in input order.

- **Where it runs.** In-process by default; given any :class:`concurrent.futures.Executor` (a
  :class:`~concurrent.futures.ProcessPoolExecutor`, or ``distributed.Client(...).get_executor()``
  for a Dask cluster) the chunks are submitted there. The chunking depends only on the number of
  rows and ``chunk_size``, never on the executor, so a deterministic model gives identical
  results whatever runs it.
- **Checkpoints.** With ``checkpoint=<directory>`` every finished chunk is written as its own
  Parquet file, atomically (a temporary file in the same directory, flushed and fsync'ed, then
  :func:`os.replace`), next to a ``manifest.json`` holding a SHA-256 key of the inputs, the
  chunk size and the caller's ``key`` (e.g. the seed and a fingerprint of the model). Run again
  with the same inputs, the finished chunks are read back and only the rest is computed, so an
  interrupted run resumes and its result equals an uninterrupted one. A checkpoint written for
  other inputs is never mixed in: it is an error unless ``overwrite=True`` discards it. Parquet is
  data only: nothing in a checkpoint is unpickled.
- **Faults.** A chunk that raises (in the model, or because its worker died) is retried up to
  ``retries`` times; chunks that still fail are reported together in a :class:`BatchError` that
  lists their indices, row ranges, the reasons and their inputs, after every other chunk has
  finished (and been checkpointed). Dask itself also re-runs tasks whose worker process died.
- **Progress** is shown with :mod:`tqdm.auto` (a widget in notebooks, a text bar in terminals).
- **A local Dask cluster** for studies: :func:`local_cluster` (one thread per worker, and
  without the allocator setting that slows numpy-heavy models in distributed's workers).

The model is called on a chunk as it is sliced from ``inputs`` (same columns, same index); it
must be deterministic for a given chunk for results to be reproducible, and picklable (defined at
module level, not a lambda or a local function) to run on a process pool or a cluster.
"""

from __future__ import annotations

import concurrent.futures as cf
import hashlib
import io
import json
import math
import os
import pickle
import time
from contextlib import contextmanager
from pathlib import Path

import numpy as np

from teakit.errors import InputError, TeakitError

__all__ = [
    "BatchError",
    "CheckpointError",
    "atomic_write_bytes",
    "default_chunk_size",
    "input_key",
    "local_cluster",
    "parquet_bytes",
    "run_batches",
]

FORMAT = "teakit-batches/1"
_MANIFEST = "manifest.json"
_TMP_PREFIX = ".tmp-"


class CheckpointError(InputError):
    """A checkpoint that cannot be used: written for other inputs, corrupt, or not a checkpoint."""


class BatchError(TeakitError, RuntimeError):
    """Some chunks failed after their retries; every other chunk finished.

    Attributes
    ----------
    failed : list of int
        Indices of the chunks that failed (0-based, in input order).
    reasons : dict
        Chunk index -> the last error, as text.
    inputs : dict
        Chunk index -> the input rows (a DataFrame) of that chunk.
    rows : dict
        Chunk index -> (first, last) row position in ``inputs``.
    partial : pandas.DataFrame
        Outputs of the chunks that finished, indexed like the inputs.
    n_chunks : int
        Number of chunks in the run.
    checkpoint : str or None
        Where the finished chunks are kept (run again with the same inputs to resume).
    """

    def __init__(self, reasons, inputs, rows, partial, n_chunks, checkpoint, attempts):
        self.failed = sorted(reasons)
        self.reasons = dict(reasons)
        self.inputs = dict(inputs)
        self.rows = dict(rows)
        self.partial = partial
        self.n_chunks = n_chunks
        self.checkpoint = checkpoint
        shown = "; ".join(
            f"chunk {i} (rows {self.rows[i][0]}-{self.rows[i][1]}): {self.reasons[i]}" for i in self.failed[:5]
        )
        more = f"; and {len(self.failed) - 5} more" if len(self.failed) > 5 else ""
        where = (f" Finished chunks are kept in the checkpoint {checkpoint}; run again with the same "
                 "inputs to compute only the missing ones." if checkpoint else
                 " Finished chunks are in the error's .partial; pass checkpoint= to keep them on disk.")
        if any("BrokenProcessPool" in r for r in self.reasons.values()):
            where += (" A worker of the process pool died, which breaks a ProcessPoolExecutor for good: "
                      "run again with a new pool (a Dask cluster restarts dead workers itself).")
        super().__init__(
            f"{len(self.failed)} of {n_chunks} chunks failed after {attempts} attempt(s) each "
            f"(chunks {self.failed}): {shown}{more}.{where}"
        )


def default_chunk_size(n: int) -> int:
    """Rows per chunk when none is given: about 32 chunks of at least 64 rows [-].

    A function of ``n`` alone, so results never depend on the executor.
    """
    return int(min(n, max(64, math.ceil(n / 32))))


def input_key(inputs, chunk_size: int, key: str = "") -> str:
    """SHA-256 (hex) of the inputs' columns, dtypes and values, the chunk size and ``key``.

    Parameters
    ----------
    inputs : pandas.DataFrame
        The input table (its index is not part of the key).
    chunk_size : int
        Rows per chunk [-].
    key : str
        Anything else the outputs depend on (seed, model fingerprint).

    Returns
    -------
    str
        64 hexadecimal digits.
    """
    h = hashlib.sha256()
    h.update(f"{FORMAT}\0{chunk_size}\0{len(inputs)}\0".encode())
    h.update(key.encode())
    for c in inputs.columns:
        col = inputs[c]
        arr = col.to_numpy()
        h.update(f"\0{c}\0{col.dtype}\0".encode())
        if arr.dtype.kind in "biufcmM":
            h.update(np.ascontiguousarray(arr).tobytes())
        else:
            h.update("\x1f".join(map(repr, arr.tolist())).encode())
    return h.hexdigest()


# -- atomic files ------------------------------------------------------------------------------
def atomic_write_bytes(path, data: bytes) -> None:
    """Write ``data`` to ``path`` atomically: temporary file, fsync, :func:`os.replace`.

    A kill at any moment leaves either the old file (or none) or the complete new one, never a
    partial file under ``path``.
    """
    path = Path(path)
    tmp = path.parent / f"{_TMP_PREFIX}{path.name}.{os.getpid()}.{time.monotonic_ns()}"
    try:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()
    try:  # make the rename itself durable where the platform allows it
        fd = os.open(path.parent, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def parquet_bytes(df, metadata: dict | None = None) -> bytes:
    """A DataFrame (without its index) as Parquet bytes, with extra key-value metadata."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.Table.from_pandas(df, preserve_index=False)
    meta = dict(table.schema.metadata or {})
    meta.update({k.encode(): str(v).encode() for k, v in (metadata or {}).items()})
    buf = io.BytesIO()
    pq.write_table(table.replace_schema_metadata(meta), buf)
    return buf.getvalue()


class _Checkpoint:
    """A directory of chunk Parquet files with a manifest (see the module docstring)."""

    def __init__(self, path, digest, manifest, overwrite):
        self.path = Path(path)
        self.digest = digest
        if self.path.exists() and not self.path.is_dir():
            raise CheckpointError(f"checkpoint {str(self.path)!r} exists and is a file; give a directory path")
        man = self.path / _MANIFEST
        if self.path.is_dir():
            if man.exists():
                try:
                    old = json.loads(man.read_text(encoding="utf-8"))
                except (OSError, ValueError) as exc:
                    raise CheckpointError(f"checkpoint manifest {str(man)!r} cannot be read: {exc}") from exc
                if not isinstance(old, dict) or old.get("format") != FORMAT or old.get("key") != digest:
                    if not overwrite:
                        raise CheckpointError(
                            f"checkpoint {str(self.path)!r} holds results of other inputs "
                            f"(key {str(old.get('key') if isinstance(old, dict) else old)[:12]}..., these inputs "
                            f"{digest[:12]}...); it is never mixed with a new run: pass overwrite=True to discard "
                            "it, or choose another checkpoint directory"
                        )
                    self._clear()
            else:
                foreign = [e.name for e in self.path.iterdir() if not e.name.startswith(_TMP_PREFIX)]
                if foreign:
                    raise CheckpointError(
                        f"checkpoint directory {str(self.path)!r} is not empty and has no {_MANIFEST}; "
                        f"refusing to write into it (found {foreign[0]!r}); choose a new or empty directory"
                    )
        self.path.mkdir(parents=True, exist_ok=True)
        for e in self.path.iterdir():  # leftovers of a run killed while writing
            if e.name.startswith(_TMP_PREFIX):
                e.unlink()
        if not man.exists():
            atomic_write_bytes(man, json.dumps({"format": FORMAT, "key": digest, **manifest}, indent=1).encode())

    def _clear(self):
        for e in self.path.iterdir():
            if e.name == _MANIFEST or e.name.startswith(_TMP_PREFIX) or (e.name.startswith("chunk-") and e.suffix == ".parquet"):
                e.unlink()

    def _file(self, i):
        return self.path / f"chunk-{i:06d}.parquet"

    def done(self, n_chunks):
        return [i for i in range(n_chunks) if self._file(i).exists()]

    def load(self, i, n_rows):
        import pandas as pd
        import pyarrow.parquet as pq

        f = self._file(i)
        try:
            meta = pq.read_schema(f).metadata or {}
            df = pd.read_parquet(f)
        except Exception as exc:  # any reader error means the file is unusable
            raise CheckpointError(f"checkpoint file {str(f)!r} cannot be read ({exc}); delete it to recompute that chunk") from exc
        if meta.get(b"teakit_key", b"").decode() != self.digest or meta.get(b"teakit_chunk", b"").decode() != str(i):
            raise CheckpointError(f"checkpoint file {str(f)!r} belongs to another run or chunk; it is never mixed in")
        if len(df) != n_rows:
            raise CheckpointError(f"checkpoint file {str(f)!r} has {len(df)} rows, expected {n_rows}")
        return df

    def save(self, i, df):
        atomic_write_bytes(self._file(i), parquet_bytes(df, {"teakit_key": self.digest, "teakit_chunk": i}))


# -- running -----------------------------------------------------------------------------------
def _call(model, chunk, index, attempt):
    """Run the model on one chunk and check its output (module level: picklable)."""
    import pandas as pd

    out = model(chunk)
    if not isinstance(out, pd.DataFrame):
        raise TypeError(f"the model must return a pandas DataFrame, got {type(out).__name__}")
    if len(out) != len(chunk):
        raise ValueError(f"the model returned {len(out)} rows for a chunk of {len(chunk)}")
    return out.reset_index(drop=True)


def _reason(exc):
    text = f"{type(exc).__name__}: {exc}"
    return text if len(text) <= 400 else text[:397] + "..."


@contextmanager
def local_cluster(n_workers: int = 2, **options):
    """A Dask ``distributed`` cluster on this machine for teakit's batch runs; yields its Client.

    Pass ``client.get_executor()`` as ``executor=`` to a study's uncertainty methods or to
    :func:`run_batches`. Worker processes with one thread each (teakit's models are vectorised
    numpy with Python between the calls), no dashboard, and without distributed's default
    ``MALLOC_TRIM_THRESHOLD_=65536`` in the workers' environment: setting it also fixes glibc's
    mmap threshold, so every numpy temporary above 128 kB is mapped and unmapped afresh. Measured
    on this project's 2-core machine kind: a chunk of 1,408 ammonia re-optimisations took 33 s
    in such a worker against 25 s without the setting, and ``np.exp(a) * a + a.sum(1)`` on
    (9600, 5) arrays 2.9x as long. The cluster and client are closed on exit.

    Parameters
    ----------
    n_workers : int
        Worker processes, 1 to 256 [-].
    **options
        Further keyword arguments of ``distributed.LocalCluster`` (e.g. ``memory_limit``).

    Examples
    --------
    >>> from teakit.uncertainty import local_cluster      # doctest: +SKIP
    >>> with local_cluster(2) as client:                  # doctest: +SKIP
    ...     si = study.sobol(n=1024, executor=client.get_executor())
    """
    if isinstance(n_workers, bool) or not isinstance(n_workers, int) or not 1 <= n_workers <= 256:
        raise InputError(f"n_workers must be a whole number from 1 to 256, got {n_workers!r}")
    import dask
    import distributed

    settings = {"n_workers": n_workers, "threads_per_worker": 1, "dashboard_address": None, "processes": True} | options
    with dask.config.set({"distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_": None}):
        cluster = distributed.LocalCluster(**settings)
    try:
        client = distributed.Client(cluster)
        try:
            yield client
        finally:
            client.close()
    finally:
        cluster.close()


def run_batches(model, inputs, *, executor=None, chunk_size: int | None = None, checkpoint=None,
                retries: int = 1, progress: bool = True, overwrite: bool = False, key: str = "",
                desc: str = "chunks"):
    """Evaluate ``model`` on every row of ``inputs``, chunk by chunk (see the module docstring).

    Parameters
    ----------
    model : callable
        ``model(chunk: DataFrame) -> DataFrame`` with one output row per input row, vectorised
        over the chunk; deterministic; picklable for an executor.
    inputs : pandas.DataFrame
        One row per evaluation (e.g. parameter sets in SI units).
    executor : concurrent.futures.Executor, optional
        Where chunks run (``None``: in this process, one chunk after another).
    chunk_size : int, optional
        Rows per chunk [-]; default :func:`default_chunk_size` (about 32 chunks).
    checkpoint : str or Path, optional
        Directory for finished chunks (created if absent); resumes a run of the same inputs.
    retries : int
        Further attempts for a chunk that fails (0: none) [-].
    progress : bool
        Show a tqdm.auto progress bar.
    overwrite : bool
        Discard a checkpoint written for other inputs instead of raising
        :class:`CheckpointError`. A checkpoint of the same inputs and key is always resumed
        (delete the directory to recompute it, e.g. after changing the model's code).
    key : str
        Anything else the outputs depend on (seed, model settings), part of the checkpoint key.
    desc : str
        Label of the progress bar.

    Returns
    -------
    pandas.DataFrame
        The model outputs in input order, indexed like ``inputs``. ``.attrs`` holds
        ``n_chunks``, ``chunk_size``, ``resumed_chunks`` (read from the checkpoint),
        ``computed_chunks`` and ``key`` (the checkpoint key).

    Raises
    ------
    InputError
        Bad arguments, or chunks whose outputs have different columns.
    CheckpointError
        A checkpoint of other inputs (without ``overwrite``), or an unreadable one.
    BatchError
        Chunks that still failed after ``retries``; lists them, their inputs and reasons.
    """
    import pandas as pd
    from tqdm.auto import tqdm

    if not callable(model):
        raise InputError(f"model must be a callable DataFrame -> DataFrame, got {type(model).__name__}")
    if not isinstance(inputs, pd.DataFrame) or len(inputs) == 0 or inputs.shape[1] == 0:
        raise InputError("inputs must be a non-empty pandas DataFrame (one row per evaluation)")
    if inputs.columns.has_duplicates:
        raise InputError(f"inputs have duplicate column names: {sorted(set(inputs.columns[inputs.columns.duplicated()]))}")
    if executor is not None and not isinstance(executor, cf.Executor):
        raise InputError(
            "executor must be a concurrent.futures.Executor (e.g. ProcessPoolExecutor or "
            f"distributed.Client(...).get_executor()), got {type(executor).__name__}"
        )
    n = len(inputs)
    if chunk_size is None:
        chunk_size = default_chunk_size(n)
    if isinstance(chunk_size, bool) or not isinstance(chunk_size, int | np.integer) or chunk_size < 1:
        raise InputError(f"chunk_size must be a whole number >= 1, got {chunk_size!r}")
    chunk_size = int(chunk_size)
    if isinstance(retries, bool) or not isinstance(retries, int | np.integer) or not 0 <= retries <= 100:
        raise InputError(f"retries must be a whole number from 0 to 100, got {retries!r}")
    if not isinstance(key, str):
        raise InputError(f"key must be a string, got {type(key).__name__}")
    if isinstance(executor, cf.ProcessPoolExecutor):
        try:
            pickle.dumps(model)
        except Exception as exc:  # report any pickling failure the same way
            raise InputError(
                f"the model must be picklable to run on a process pool (define it at module level, "
                f"not as a lambda or a local function): {_reason(exc)}"
            ) from exc

    n_chunks = math.ceil(n / chunk_size)
    bounds = {i: (i * chunk_size, min(n, (i + 1) * chunk_size)) for i in range(n_chunks)}

    def chunk(i):
        a, b = bounds[i]
        return inputs.iloc[a:b]

    digest = input_key(inputs, chunk_size, key)
    ckpt = None
    results = {}
    if checkpoint is not None:
        ckpt = _Checkpoint(checkpoint, digest, {"rows": n, "chunk_size": chunk_size, "n_chunks": n_chunks,
                                                "columns": [str(c) for c in inputs.columns]}, overwrite)
        for i in ckpt.done(n_chunks):
            results[i] = ckpt.load(i, bounds[i][1] - bounds[i][0])
    resumed = len(results)
    pending = [i for i in range(n_chunks) if i not in results]
    failures = {}
    bar = tqdm(total=n_chunks, initial=resumed, desc=desc, unit="chunk", disable=not progress, leave=False)

    def finish(i, df):
        if ckpt is not None:
            ckpt.save(i, df)
        results[i] = df
        bar.update(1)

    futures = {}
    try:
        if executor is None:
            for i in pending:
                last = None
                for attempt in range(retries + 1):
                    try:
                        df = _call(model, chunk(i), i, attempt)
                    except Exception as exc:  # a failing chunk is reported, not fatal
                        last = exc
                        continue
                    finish(i, df)
                    break
                else:
                    failures[i] = _reason(last)
        else:
            def submit(i, attempt):
                # The attempt number is an argument so a cluster that caches results by the
                # task's arguments (Dask) really runs the retry.
                futures[executor.submit(_call, model, chunk(i), i, attempt)] = (i, attempt)

            for i in pending:
                submit(i, 0)
            while futures:
                done, _ = cf.wait(list(futures), return_when=cf.FIRST_COMPLETED)
                for f in done:
                    i, attempt = futures.pop(f)
                    try:
                        df = f.result()
                    except Exception as exc:  # includes a dead worker or a broken pool
                        if attempt < retries:
                            try:
                                submit(i, attempt + 1)
                            except Exception as exc2:  # e.g. a broken process pool
                                failures[i] = _reason(exc2)
                        else:
                            failures[i] = _reason(exc)
                        continue
                    finish(i, df)
    finally:
        for f in futures:
            f.cancel()
        bar.close()

    ordered = [results[i] for i in sorted(results)]
    if ordered:
        cols = list(ordered[0].columns)
        for i in sorted(results):
            if list(results[i].columns) != cols:
                raise InputError(f"the model returned different columns for chunk {i} than for chunk {min(results)}")
    if failures:
        done_rows = np.concatenate([np.arange(*bounds[i]) for i in sorted(results)]) if results else np.array([], int)
        partial = pd.concat(ordered, ignore_index=True) if ordered else pd.DataFrame()
        if ordered:
            partial.index = inputs.index[done_rows]
        raise BatchError(failures, {i: chunk(i) for i in failures}, {i: (bounds[i][0], bounds[i][1] - 1) for i in failures},
                         partial, n_chunks, str(checkpoint) if checkpoint is not None else None, retries + 1)
    out = pd.concat(ordered, ignore_index=True)
    out.index = inputs.index
    out.attrs.update({"n_chunks": n_chunks, "chunk_size": chunk_size, "resumed_chunks": resumed,
                      "computed_chunks": n_chunks - resumed, "key": digest})
    return out

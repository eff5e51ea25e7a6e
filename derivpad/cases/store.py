"""Finished chunks of load cases kept on disk, so that a run that stops resumes where it was.

Each chunk's results go to ``<folder>/.chunks/<key>.parquet``, written whole or not at all
(a temporary file, then a rename); the key is a hash of everything the chunk's results depend
on — the problem, the criteria, ``on_error``, the derivpad version, and the chunk's case names,
values and bad rows — so a chunk is never taken from a different run. A run given the same
folder loads the chunks it finds and computes only the others. When the run is done, the whole
table is published as ``<folder>/cases.parquet`` and the envelope as ``<folder>/envelope.csv``,
each by a rename.
"""

from __future__ import annotations

import hashlib
import json
import os
import tempfile
from pathlib import Path

import numpy as np

from .chunk import Chunk
from ..errors import ExportError, import_extra

__all__ = ["ChunkStore"]


class ChunkStore:
    """The chunk files of one run under ``folder`` (made if missing)."""

    def __init__(self, folder, run_key: str):
        self.folder = Path(folder)
        if self.folder.exists() and not self.folder.is_dir():
            raise ExportError(f"store= {folder} is a file; give a folder for the chunks")
        self.chunks = self.folder / ".chunks"
        self.chunks.mkdir(parents=True, exist_ok=True)
        self.run_key = run_key

    def key(self, ids, values: np.ndarray, failed: dict) -> str:
        h = hashlib.sha256(self.run_key.encode())
        h.update(json.dumps([list(ids), sorted(failed.items())]).encode())
        h.update(np.ascontiguousarray(values, dtype=float).tobytes())
        return h.hexdigest()[:32]

    def load(self, key: str):
        """The :class:`Chunk` of a finished chunk, or None."""
        path = self.chunks / f"{key}.parquet"
        if not path.is_file():
            return None
        (pq,) = import_extra(("pyarrow.parquet",), "resuming load cases", "cases")
        table = pq.read_table(path)
        meta = json.loads(table.schema.metadata[b"derivpad"])
        columns = {}
        for k in meta["keys"]:
            column = table.column(f"r:{k}")
            columns[k] = (np.array(column.to_pylist(), dtype=object) if k.endswith(": outcome")
                          else column.to_numpy(zero_copy_only=False).astype(float))
        return Chunk(tuple(meta["keys"]), meta["units"], columns,
                     table.column("notes").to_pylist(), table.column("form").to_pylist())

    def save(self, key: str, chunk: Chunk) -> None:
        """Write a finished chunk (whole or not at all)."""
        (pa,) = import_extra(("pyarrow",), "keeping load-case chunks", "cases")
        import pyarrow.parquet as pq
        data = {f"r:{k}": pa.array(chunk.columns[k].tolist() if k.endswith(": outcome")
                                   else chunk.columns[k]) for k in chunk.keys}
        data.update(notes=pa.array(chunk.notes, pa.string()),
                    form=pa.array(chunk.forms, pa.string()))
        meta = {b"derivpad": json.dumps({"keys": list(chunk.keys),
                                         "units": chunk.units}).encode()}
        table = pa.table(data).replace_schema_metadata(meta)
        publish(self.chunks / f"{key}.parquet", lambda p: pq.write_table(table, p))

    def done(self) -> int:
        """How many chunk files there are."""
        return len(list(self.chunks.glob("*.parquet")))


def publish(path: Path, write) -> Path:
    """Write ``path`` through a temporary file in its folder and a rename: a reader sees the
    old file or the new one, never half of one."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=path.parent)
    os.close(fd)
    try:
        write(tmp)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


class StoredTable:
    """A run's table kept in its store (``cases.parquet``), read into a pandas DataFrame the
    first time it is used: a run of millions of cases returns at once, and its rows are in
    memory only when asked for."""

    def __init__(self, path: Path, rows: int):
        self.path = Path(path)
        self.rows = rows
        self._frame = None

    @property
    def frame(self):
        """The table as a pandas DataFrame (read on first use, then kept)."""
        if self._frame is None:
            from .table import pandas
            self._frame = pandas().read_parquet(self.path)
        return self._frame

    def __len__(self) -> int:
        return self.rows

    def __getitem__(self, key):
        return self.frame[key]

    def __getattr__(self, name):
        if name.startswith("_"):
            raise AttributeError(name)
        return getattr(self.frame, name)

    def __repr__(self) -> str:
        return f"<StoredTable {self.rows:,} cases in {self.path}>"


def write_stored_table(path: Path, chunks: ChunkStore, summaries, table, keys, units) -> Path:
    """``cases.parquet`` from the store's chunk files, one chunk at a time (memory bounded by
    a chunk), with every run's column in ``keys``: each case's name, its inputs, its results,
    form and notes. Written whole or not at all."""
    (pa,) = import_extra(("pyarrow",), "keeping load-case chunks", "cases")
    import pyarrow.parquet as pq
    fields = [pa.field("case", pa.string())] + [pa.field(n, pa.float64()) for n in table.names]
    fields += [pa.field(k, pa.string() if k.endswith(": outcome") else pa.float64())
               for k in keys]
    fields += [pa.field("form", pa.string()), pa.field("notes", pa.string())]
    schema = pa.schema(fields)

    def write(tmp):
        with pq.ParquetWriter(tmp, schema) as out:
            start = 0
            for s in summaries:
                part = pq.read_table(chunks.chunks / f"{s.key}.parquet")
                stop = start + s.size
                data = [pa.array(list(table.ids[start:stop]), pa.string())]
                data += [pa.array(table.values[start:stop, j]) for j in range(len(table.names))]
                for k in keys:
                    if f"r:{k}" in part.column_names:
                        data.append(part.column(f"r:{k}").cast(schema.field(k).type))
                    else:
                        empty = "not evaluated" if k.endswith(": outcome") else None
                        data.append(pa.array([empty] * s.size, schema.field(k).type))
                data += [part.column("form"), part.column("notes")]
                out.write_table(pa.Table.from_arrays(data, schema=schema))
                start = stop
    return publish(path, write)

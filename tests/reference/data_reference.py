"""Reference values for the outcome-file readers (tests/data_reading.rs).

Writes the Parquet fixtures in tests/data/outcomes/ with pyarrow, then reads every fixture back
independently of surety — CSV/TSV with Python's csv module, Parquet with pyarrow — and writes
tests/reference/data_summaries.json: for each case the rows, SHA-256 (hashlib), and per arm n,
events, the sums (math.fsum, correctly rounded), min/max, split sums, the 40-bin histogram and
the ordered observations, all after rescaling by the declared range.

It also writes tests/reference/cluster_summaries.json for the cluster-column cases: per arm the
clusters in trial order of their first trial (trial order: the order column, stably, else row
order) with their n and math.fsum of the rescaled values, and the arm of cluster means
(fsum / n per cluster) that a clustered analysis sees: its sums, extremes, split sums and
40-bin histogram, and the nominal trial, event and cluster counts.

    pip install pyarrow
    python3 tests/reference/data_reference.py

Rules applied here are the documented ones (src/data/mod.rs, src/data/delimited.rs): unquoted
fields are trimmed of spaces, numbers are read trimmed, a UTF-8 byte-order mark is ignored, the
order column sorts stably, histogram bin = min(floor(40 u), 39).
"""

import csv
import hashlib
import json
import math
import os

import pyarrow as pa
import pyarrow.parquet as pq

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "data", "outcomes")
BINS = 40


def rel(name):
    return os.path.join(DATA, name)


# ---------------------------------------------------------------- Parquet fixtures (invented data)


def read_csv_rows(name, delimiter=","):
    with open(rel(name), newline="", encoding="utf-8-sig") as f:
        return list(csv.reader(f, delimiter=delimiter))


def write_parquet_fixtures():
    rows = read_csv_rows("drops.csv")[1:]
    drops = pa.table(
        {
            "build": pa.array([r[0] for r in rows], pa.string()),
            "drop_m": pa.array([float(r[1]) for r in rows], pa.float64()),
            "cycle": pa.array([int(r[2]) for r in rows], pa.int64()),
        }
    )
    # Two row groups (5 + 5 + 2 rows), so the reader must walk several.
    pq.write_table(drops, rel("drops.parquet"), row_group_size=5, compression="snappy")
    pq.write_table(drops, rel("drops_gzip.parquet"), compression="gzip")
    pq.write_table(drops, rel("drops_lz4.parquet"), compression="lz4")
    pq.write_table(drops, rel("drops_plain.parquet"), compression="none", use_dictionary=False)
    pq.write_table(drops, rel("drops_zstd.parquet"), compression="zstd")
    pq.write_table(drops, rel(os.path.join("errors", "brotli.parquet")), compression="brotli")

    brows = read_csv_rows("binary.csv")[1:]
    site_id = {"north": 1, "south": 2}
    binary = pa.table(
        {
            "site": pa.array([r[0] for r in brows], pa.string()),
            "site_id": pa.array([site_id[r[0]] for r in brows], pa.int32()),
            "failed": pa.array([r[1] == "1" for r in brows], pa.bool_()),
            "failed_i": pa.array([int(r[1]) for r in brows], pa.int8()),
            "unit": pa.array([int(r[2]) for r in brows], pa.uint64()),
            "score": pa.array([int(r[1]) * 0.5 for r in brows], pa.float64()),
        }
    )
    pq.write_table(binary, rel("binary.parquet"))

    types = pa.table(
        {
            "gap_mm": pa.array([0.5, 9.75, 3.125, 10.0, 0.0, 7.1], pa.float32()),
            "count": pa.array([0, 2**40, 12, 999_999_999_999, 7, 1], pa.uint64()),
            "small": pa.array([-3, 4, 0, 12, -12, 5], pa.int16()),
            "at": pa.array(
                [1_764_000_000_000_000_005, 1_764_000_000_000_000_001, 1_764_000_000_000_000_003,
                 1_764_000_000_000_000_002, 1_764_000_000_000_000_004, 1_764_000_000_000_000_000],
                pa.timestamp("ns"),
            ),
            "label": pa.array(["b", "a", "c", "a", "b", "c"], pa.string()),
            "price": pa.array([1, 2, 3, 4, 5, 6], pa.decimal128(9, 2)),
        }
    )
    pq.write_table(types, rel("types.parquet"))

    nulls = pa.table(
        {
            "build": pa.array(["fw-4.2.0", "fw-4.2.0", "fw-4.2.1", "fw-4.2.1", None, "fw-4.2.0"]),
            "drop_m": pa.array([0.5, 1.0, None, 2.0, 0.25, None], pa.float64()),
        }
    )
    pq.write_table(nulls, rel(os.path.join("errors", "nulls.parquet")))

    oor = pa.table({"drop_m": pa.array([0.5, 2.6, 1.0, -0.5, 2.5, 3.0], pa.float64())})
    pq.write_table(oor, rel(os.path.join("errors", "out_of_range.parquet")))

    nested = pa.table({"drop_m": pa.array([[0.5, 1.0], [2.0]], pa.list_(pa.float64()))})
    pq.write_table(nested, rel(os.path.join("errors", "nested.parquet")))

    empty = pa.table({"drop_m": pa.array([], pa.float64())})
    pq.write_table(empty, rel(os.path.join("errors", "no_rows.parquet")))

    # A damaged copy: the footer's magic bytes are cut off.
    with open(rel("drops.parquet"), "rb") as f:
        whole = f.read()
    with open(rel(os.path.join("errors", "truncated.parquet")), "wb") as f:
        f.write(whole[: len(whole) - 10])
    with open(rel(os.path.join("errors", "not_parquet.parquet")), "wb") as f:
        f.write(b"build,drop_m\nfw-4.2.0,0.5\n")


# ---------------------------------------------------------------- independent reading


def sha256(name):
    with open(rel(name), "rb") as f:
        data = f.read()
    return hashlib.sha256(data).hexdigest(), len(data)


def csv_records(name, delimiter):
    """Rows as dicts; unquoted-field trimming is applied to every field, which agrees with
    surety's rule for these fixtures (their quoted fields carry no surrounding blanks)."""
    rows = read_csv_rows(name, delimiter)
    header = [h.strip(" ") for h in rows[0]]
    return [dict(zip(header, [c.strip(" ") for c in r])) for r in rows[1:]]


def parquet_records(name):
    table = pq.read_table(rel(name))
    cols = {}
    for n in table.column_names:
        col = table.column(n)
        if pa.types.is_timestamp(col.type):
            col = col.cast(pa.int64())
        cols[n] = col.to_pylist()
    return [dict(zip(cols.keys(), vals)) for vals in zip(*cols.values())]


def summarise(records, case):
    low, high = case["range"]
    binary = case["kind"] == "binary"
    col, arm_col, order_col = case["column"], case.get("arm_column"), case.get("order_column")
    arms = {}
    order = []
    for i, r in enumerate(records):
        raw = r[col]
        if binary:
            x = float(int(raw))
        else:
            x = float(raw)
        assert low <= x <= high, (case["name"], x)
        name = str(r[arm_col]) if arm_col else "all"
        if name not in arms:
            arms[name] = []
            order.append(name)
        key = r[order_col] if order_col else i
        if isinstance(key, str) and order_col and case["file"].endswith((".csv", ".tsv")):
            key = float(key) if any(c in key for c in ".eE") else int(key)
        arms[name].append((key, i, x))
    out = []
    for name in order:
        items = sorted(arms[name], key=lambda t: (t[0], t[1]))
        xs = [x for _, _, x in items]
        us = [(x - low) / (high - low) for x in xs]
        hist = [0] * BINS
        for u in us:
            hist[min(int(u * BINS), BINS - 1)] += 1
        out.append(
            {
                "name": name,
                "n": len(us),
                "events": sum(1 for x in xs if x == 1.0) if binary else None,
                "sum": math.fsum(us),
                "sum_sq": math.fsum(u * u for u in us),
                "min": min(us),
                "max": max(us),
                "split": [math.fsum(max(0.0, u - 0.5) for u in us), math.fsum(max(0.0, 0.5 - u) for u in us)],
                "histogram": hist,
                "raw_min": min(xs),
                "raw_max": max(xs),
                "observations": us,
            }
        )
    return out


CASES = [
    {"name": "csv_arms_ordered", "file": "drops.csv", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "tsv_crlf_arms_ordered", "file": "drops.tsv", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "csv_one_arm_row_order", "file": "drops.csv", "column": "drop_m", "kind": "bounded",
     "range": [0, 2.5]},
    {"name": "csv_quoted_crlf_bom", "file": "quoted.csv", "column": "drop_m", "arm_column": "build",
     "kind": "bounded", "range": [0, 2.5]},
    {"name": "csv_single_column_negative_range", "file": "single.csv", "column": "offset_mm",
     "kind": "bounded", "range": [-1, 1]},
    {"name": "csv_binary_arms_ordered", "file": "binary.csv", "column": "failed", "arm_column": "site",
     "order_column": "unit", "kind": "binary", "range": [0, 1]},
    {"name": "parquet_snappy_row_groups", "file": "drops.parquet", "column": "drop_m",
     "arm_column": "build", "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "parquet_gzip", "file": "drops_gzip.parquet", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "parquet_lz4", "file": "drops_lz4.parquet", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "parquet_zstd", "file": "drops_zstd.parquet", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "parquet_plain", "file": "drops_plain.parquet", "column": "drop_m", "arm_column": "build",
     "order_column": "cycle", "kind": "bounded", "range": [0, 2.5]},
    {"name": "parquet_boolean", "file": "binary.parquet", "column": "failed", "arm_column": "site",
     "order_column": "unit", "kind": "binary", "range": [0, 1]},
    {"name": "parquet_int8_binary_int_arms", "file": "binary.parquet", "column": "failed_i",
     "arm_column": "site_id", "kind": "binary", "range": [0, 1]},
    {"name": "parquet_float32_timestamp_order", "file": "types.parquet", "column": "gap_mm",
     "order_column": "at", "kind": "bounded", "range": [0, 10]},
    {"name": "parquet_uint64_string_order", "file": "types.parquet", "column": "count",
     "order_column": "label", "kind": "bounded", "range": [0, 2e12]},
    {"name": "parquet_int16", "file": "types.parquet", "column": "small", "kind": "bounded",
     "range": [-12, 12]},
]


# ---------------------------------------------------------------- cluster columns


def write_cluster_fixtures():
    rows = read_csv_rows("clustered.csv")[1:]
    number = {"F-07": 7, "F-12, bay 2": 12, "F-03": 3, "G-01": 101, "H-22": 222}
    table = pa.table(
        {
            "line": pa.array([r[0] for r in rows], pa.string()),
            "fixture": pa.array([r[1] for r in rows], pa.string()),
            "fixture_no": pa.array([number[r[1]] for r in rows], pa.int32()),
            "fixture_raw": pa.array([r[1].encode("utf-8") for r in rows], pa.binary()),
            "night": pa.array([int(r[2]) >= 5 for r in rows], pa.bool_()),
            "cycle": pa.array([int(r[2]) for r in rows], pa.int64()),
            "gap_mm": pa.array([float(r[3]) for r in rows], pa.float64()),
            "leak": pa.array([r[4] == "1" for r in rows], pa.bool_()),
        }
    )
    # Row groups of 5 rows: clusters span row groups.
    pq.write_table(table, rel("clustered.parquet"), row_group_size=5)

    nulls = pa.table(
        {
            "fixture": pa.array(["F-07", None, "F-07", "", "F-09"], pa.string()),
            "gap_mm": pa.array([0.5, 1.0, 1.5, 2.0, 2.5], pa.float64()),
        }
    )
    pq.write_table(nulls, rel(os.path.join("errors", "cluster_nulls.parquet")))


def cluster_name(v):
    """A cluster cell as text, by the documented rule (src/data/file.rs, ClusterTotal::name)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, bytes):
        return "0x" + v.hex()
    return str(v)


def summarise_clusters(records, case):
    low, high = case["range"]
    binary = case["kind"] == "binary"
    col, arm_col = case["column"], case.get("arm_column")
    order_col, cluster_col = case.get("order_column"), case["cluster_column"]
    arms = {}
    order = []
    for i, r in enumerate(records):
        x = float(int(r[col])) if binary else float(r[col])
        assert low <= x <= high, (case["name"], x)
        name = str(r[arm_col]) if arm_col else "all"
        if name not in arms:
            arms[name] = []
            order.append(name)
        key = r[order_col] if order_col else i
        if order_col and isinstance(key, str):
            key = int(key)
        arms[name].append((key, i, cluster_name(r[cluster_col]), x))
    out = []
    for name in order:
        trials = sorted(arms[name], key=lambda t: (t[0], t[1]))
        members = {}
        for _, _, c, x in trials:
            members.setdefault(c, []).append((x - low) / (high - low))
        clusters = [{"name": c, "n": len(us), "sum": math.fsum(us)} for c, us in members.items()]
        means = [math.fsum(us) / len(us) for us in members.values()]
        hist = [0] * BINS
        for m in means:
            hist[min(int(m * BINS), BINS - 1)] += 1
        sizes = [c["n"] for c in clusters]
        out.append(
            {
                "name": name,
                "trials": len(trials),
                "events": sum(1 for t in trials if t[3] == 1.0) if binary else None,
                "clusters": clusters,
                "smallest_cluster": min(sizes),
                "largest_cluster": max(sizes),
                "means": means,
                "mean_summary": {
                    "n": len(means),
                    "sum": math.fsum(means),
                    "sum_sq": math.fsum(m * m for m in means),
                    "min": min(means),
                    "max": max(means),
                    "split": [math.fsum(max(0.0, m - 0.5) for m in means),
                              math.fsum(max(0.0, 0.5 - m) for m in means)],
                },
                "histogram": hist,
            }
        )
    return out


CLUSTER_CASES = [
    {"name": "csv_clusters_per_arm_row_order", "file": "clustered.csv", "column": "gap_mm",
     "arm_column": "line", "cluster_column": "fixture", "kind": "bounded", "range": [0, 4]},
    {"name": "csv_clusters_per_arm_ordered", "file": "clustered.csv", "column": "gap_mm",
     "arm_column": "line", "order_column": "cycle", "cluster_column": "fixture",
     "kind": "bounded", "range": [0, 4]},
    {"name": "csv_clusters_one_arm", "file": "clustered.csv", "column": "gap_mm",
     "cluster_column": "fixture", "kind": "bounded", "range": [0, 4]},
    {"name": "csv_clusters_binary", "file": "clustered.csv", "column": "leak", "arm_column": "line",
     "cluster_column": "fixture", "kind": "binary", "range": [0, 1]},
    {"name": "parquet_clusters_string_ordered", "file": "clustered.parquet", "column": "gap_mm",
     "arm_column": "line", "order_column": "cycle", "cluster_column": "fixture",
     "kind": "bounded", "range": [0, 4]},
    {"name": "parquet_clusters_int_boolean_outcome", "file": "clustered.parquet", "column": "leak",
     "arm_column": "line", "cluster_column": "fixture_no", "kind": "binary", "range": [0, 1]},
    {"name": "parquet_clusters_boolean", "file": "clustered.parquet", "column": "gap_mm",
     "cluster_column": "night", "kind": "bounded", "range": [0, 4]},
    {"name": "parquet_clusters_bytes_ordered", "file": "clustered.parquet", "column": "gap_mm",
     "arm_column": "line", "order_column": "cycle", "cluster_column": "fixture_raw",
     "kind": "bounded", "range": [0, 4]},
]


def records_of(name):
    if name.endswith(".parquet"):
        return parquet_records(name)
    return csv_records(name, "\t" if name.endswith(".tsv") else ",")


def main():
    write_parquet_fixtures()
    write_cluster_fixtures()
    results = []
    for case in CASES:
        name = case["file"]
        if name.endswith(".parquet"):
            records = parquet_records(name)
        else:
            records = csv_records(name, "\t" if name.endswith(".tsv") else ",")
        digest, size = sha256(name)
        results.append(dict(case, rows=len(records), sha256=digest, bytes=size,
                            arms=summarise(records, case)))
    with open(os.path.join(HERE, "data_summaries.json"), "w") as f:
        json.dump({"source": "tests/reference/data_reference.py (Python csv module, pyarrow "
                   + pa.__version__ + ", math.fsum, hashlib)", "cases": results}, f, indent=1)
        f.write("\n")
    clustered = [dict(case, arms=summarise_clusters(records_of(case["file"]), case))
                 for case in CLUSTER_CASES]
    with open(os.path.join(HERE, "cluster_summaries.json"), "w") as f:
        json.dump({"source": "tests/reference/data_reference.py (Python csv module, pyarrow "
                   + pa.__version__ + ", math.fsum)", "cases": clustered}, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()

//! Reading a 10,000,000-row single-column CSV of bounded outcomes into a summary, SHA-256
//! included, as `surety run` does; criterion reports the throughput in bytes per second.
//! benches/read_csv_numpy.py does the same computation with NumPy on the same file.
//!
//!     cargo bench --bench read_csv
//!
//! The input is written on first use to target/bench-data/read_csv_10m.csv (about 90 MB, never
//! committed): a header `drop_m`, then row i holds splitmix64(i) mod 2,500,001 millionths with
//! six decimals, a value in the declared range [0, 2.5].

use std::io::Write;
use std::path::PathBuf;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;
use surety::data::{ReadOptions, ValueKind, read_file};

const ROWS: u64 = 10_000_000;

/// SplitMix64 (Steele, Lea and Flood 2014): a fixed, well-mixed sequence from a counter.
fn splitmix64(i: u64) -> u64 {
    let mut z = i.wrapping_add(1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

fn input() -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-data");
    let path = dir.join("read_csv_10m.csv");
    if !path.exists() {
        std::fs::create_dir_all(&dir).expect("create target/bench-data");
        let tmp = dir.join("read_csv_10m.csv.tmp");
        let mut out = std::io::BufWriter::new(std::fs::File::create(&tmp).expect("create input"));
        writeln!(out, "drop_m").expect("write input");
        for i in 0..ROWS {
            let micro = splitmix64(i) % 2_500_001;
            writeln!(out, "{}.{:06}", micro / 1_000_000, micro % 1_000_000).expect("write input");
        }
        out.flush().expect("write input");
        drop(out);
        std::fs::rename(&tmp, &path).expect("rename input");
    }
    path
}

fn bench(c: &mut Criterion) {
    let path = input();
    let bytes = std::fs::metadata(&path).expect("input").len();
    let opts = ReadOptions {
        column: "drop_m",
        arm_column: None,
        order_column: None,
        cluster_column: None,
        kind: ValueKind::Bounded {
            low: 0.0,
            high: 2.5,
        },
        keep_observations: false,
        expected_arms: None,
    };
    let mut group = c.benchmark_group("read_csv_10m_rows");
    group.sample_size(10);
    group.throughput(Throughput::Bytes(bytes));
    group.bench_function("summary_and_sha256", |b| {
        b.iter(|| {
            let d = read_file("read_csv_10m.csv", black_box(&path), &opts, &mut |_, _| {})
                .expect("the bench input is valid");
            black_box(d.arms[0].summary.sum)
        })
    });
    group.bench_function("summary_sha256_and_observations", |b| {
        let keep = ReadOptions {
            keep_observations: true,
            ..opts
        };
        b.iter(|| {
            let d = read_file("read_csv_10m.csv", black_box(&path), &keep, &mut |_, _| {})
                .expect("the bench input is valid");
            black_box(d.arms[0].observations.as_ref().map(Vec::len))
        })
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);

//! Timing of the dose log: append with sync, opening a 100 000-entry log, CSV export of it.
//!
//! Targets on the project's 2-core machine: append ≤ 5 ms, open ≤ 200 ms, export ≤ 500 ms.

use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::engine::dosing::units::UnitSystem;
use molefeed::log::{Draft, Log, Query, export, record, sample};
use std::path::PathBuf;
use std::time::Duration;

const ENTRIES: usize = 100_000;

fn bench_dir() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("molefeed-log-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("bench directory");
    dir
}

fn big_log(dir: &std::path::Path) -> PathBuf {
    let path = dir.join("big.doselog");
    let file = std::fs::File::create(&path).expect("create sample");
    sample::write_sample(&mut std::io::BufWriter::new(file), ENTRIES).expect("write sample");
    path
}

fn append_with_sync(c: &mut Criterion) {
    let dir = bench_dir();
    let mut log = Log::open(&dir.join("append.doselog"), "bench").expect("open");
    let draft = Draft::Entry {
        at: None,
        site: "Bench works".into(),
        dose: record::example_dose(),
    };
    c.bench_function("log/append_with_sync", |b| {
        b.iter(|| log.append(draft.clone()).expect("append"))
    });
}

fn open_and_export(c: &mut Criterion) {
    let dir = bench_dir();
    let path = big_log(&dir);
    let mut group = c.benchmark_group("log_100k");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(8));
    group.bench_function("open_and_index", |b| {
        b.iter(|| {
            let log = Log::open(&path, "bench").expect("open");
            assert_eq!(log.record_count(), ENTRIES);
        })
    });
    let log = Log::open(&path, "bench").expect("open");
    group.bench_function("csv_export", |b| {
        b.iter(|| {
            let rows = export::csv(
                &log,
                &Query::default(),
                UnitSystem::Si,
                &mut std::io::sink(),
            )
            .expect("export");
            assert_eq!(rows, ENTRIES);
        })
    });
    group.finish();
    drop(log);
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, append_with_sync, open_and_export);
criterion_main!(benches);

//! Behaviour of the log as a whole: failures, recovery cases, revisions, queries, merge.

use super::*;
use std::sync::atomic::{AtomicU32, Ordering};
use std::sync::{Arc, Mutex};

/// A fresh directory under the system temp dir, unique per test, removed when dropped.
struct Scratch(PathBuf);

impl std::ops::Deref for Scratch {
    type Target = Path;
    fn deref(&self) -> &Path {
        &self.0
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn temp_dir(name: &str) -> Scratch {
    static COUNTER: AtomicU32 = AtomicU32::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let dir = std::env::temp_dir().join(format!("molefeed-log-{}-{name}-{n}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    Scratch(dir)
}

fn entry(tap: &str, chemical: &str, at: &str, note: &str) -> Draft {
    let mut dose = record::example_dose();
    dose.tap = tap.into();
    dose.chemical = chemical.into();
    dose.note = note.into();
    Draft::Entry {
        at: Some(DateTime::parse_from_rfc3339(at).unwrap()),
        site: "Riverside".into(),
        dose,
    }
}

fn simple(note: &str) -> Draft {
    entry("inlet", "chlorine", "2026-03-04T08:00:00+01:00", note)
}

fn notes(log: &Log) -> Vec<String> {
    log.current()
        .unwrap()
        .into_iter()
        .map(|v| v.dose.note)
        .collect()
}

/// What the in-memory disk does on the next operations.
#[derive(Default)]
struct Faults {
    /// Fail writes with this error after writing this many bytes of them.
    write: Option<(io::ErrorKind, usize)>,
    sync: Option<io::ErrorKind>,
}

/// An in-memory disk shared with the test, so the test can inspect and reopen it.
#[derive(Clone, Default)]
struct MemDisk {
    bytes: Arc<Mutex<Vec<u8>>>,
    faults: Arc<Mutex<Faults>>,
}

impl frame::ReadAt for MemDisk {
    fn byte_len(&self) -> io::Result<u64> {
        Ok(self.bytes.lock().unwrap().len() as u64)
    }

    fn read_exact_at(&self, offset: u64, buf: &mut [u8]) -> io::Result<()> {
        self.bytes
            .lock()
            .unwrap()
            .as_slice()
            .read_exact_at(offset, buf)
    }
}

impl Storage for MemDisk {
    fn write_all_at(&mut self, offset: u64, data: &[u8]) -> io::Result<()> {
        let (data, failure) = match self.faults.lock().unwrap().write {
            Some((kind, after)) => (&data[..after.min(data.len())], Some(kind)),
            None => (data, None),
        };
        let mut bytes = self.bytes.lock().unwrap();
        let end = offset as usize + data.len();
        if bytes.len() < end {
            bytes.resize(end, 0);
        }
        bytes[offset as usize..end].copy_from_slice(data);
        match failure {
            Some(kind) => Err(io::Error::from(kind)),
            None => Ok(()),
        }
    }

    fn sync(&mut self) -> io::Result<()> {
        match self.faults.lock().unwrap().sync {
            Some(kind) => Err(io::Error::from(kind)),
            None => Ok(()),
        }
    }

    fn set_len(&mut self, len: u64) -> io::Result<()> {
        self.bytes.lock().unwrap().resize(len as usize, 0);
        Ok(())
    }
}

fn open_mem(disk: &MemDisk) -> Result<Log> {
    Log::from_storage(Box::new(disk.clone()), Path::new("memory"), "tab-1", true)
}

#[test]
fn short_write_then_full_disk_keeps_entry_pending_until_retry() {
    let disk = MemDisk::default();
    let mut log = open_mem(&disk).unwrap();
    let first = log.append(simple("first")).unwrap();
    let good_len = disk.bytes.lock().unwrap().len();

    disk.faults.lock().unwrap().write = Some((io::ErrorKind::StorageFull, 30));
    let err = log.append(simple("second")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::StorageFull);
    assert!(err.message().contains("full"), "{}", err.message());
    let pending_id = err.param("id").unwrap().to_string();
    assert_eq!(log.pending().len(), 1);
    assert_eq!(log.pending()[0].id().to_string(), pending_id);
    assert_eq!(
        notes(&log),
        ["first"],
        "a pending entry is not shown as saved"
    );

    // A second failure keeps both, in order.
    let err = log.append(simple("third")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::StorageFull);
    assert_eq!(log.pending().len(), 2);

    disk.faults.lock().unwrap().write = None;
    assert_eq!(log.retry_pending().unwrap(), 2);
    assert!(log.pending().is_empty());
    assert_eq!(notes(&log), ["first", "second", "third"]);
    assert!(disk.bytes.lock().unwrap().len() > good_len);

    drop(log);
    let reopened = open_mem(&disk).unwrap();
    assert!(reopened.recovery().is_clean(), "{:?}", reopened.recovery());
    assert_eq!(notes(&reopened), ["first", "second", "third"]);
    assert!(reopened.get(first).unwrap().is_some());
}

#[test]
fn failed_sync_is_not_an_acknowledgement() {
    let disk = MemDisk::default();
    let mut log = open_mem(&disk).unwrap();
    disk.faults.lock().unwrap().sync = Some(io::ErrorKind::ReadOnlyFilesystem);
    let err = log.append(simple("unsynced")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::ReadOnly);
    assert_eq!(log.pending().len(), 1);
    disk.faults.lock().unwrap().sync = None;
    log.retry_pending().unwrap();
    assert_eq!(notes(&log), ["unsynced"]);
    assert_eq!(
        log.record_count(),
        1,
        "the retry rewrote the same place, no duplicate"
    );
}

#[test]
fn short_write_left_on_disk_is_a_torn_tail_on_reopen() {
    let disk = MemDisk::default();
    let mut log = open_mem(&disk).unwrap();
    log.append(simple("kept")).unwrap();
    let good_len = disk.bytes.lock().unwrap().len() as u64;
    disk.faults.lock().unwrap().write = Some((io::ErrorKind::Other, 40));
    assert_eq!(
        log.append(simple("lost")).unwrap_err().kind(),
        ErrorKind::Io
    );
    drop(log);
    disk.faults.lock().unwrap().write = None;
    let reopened = open_mem(&disk).unwrap();
    assert_eq!(
        reopened.recovery().torn_tail,
        Some(Span {
            offset: good_len,
            len: 40
        })
    );
    assert!(reopened.recovery().tail_cut);
    assert_eq!(disk.bytes.lock().unwrap().len() as u64, good_len);
    assert_eq!(notes(&reopened), ["kept"]);
}

fn file_with(notes_in_order: &[&str]) -> (Scratch, PathBuf, Vec<Uuid>) {
    let scratch = temp_dir("file");
    let path = scratch.join("site.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    assert!(log.recovery().header_written);
    let ids = notes_in_order
        .iter()
        .map(|n| log.append(simple(n)).unwrap())
        .collect();
    (scratch, path, ids)
}

#[test]
fn torn_tail_is_cut_and_reported() {
    let (_scratch, path, _) = file_with(&["a", "b"]);
    let clean_len = std::fs::metadata(&path).unwrap().len();
    let mut frame_bytes = Vec::new();
    frame::encode(
        &record::encode(&Record::Entry(Entry {
            id: Uuid::now_v7(),
            device: "x".into(),
            at: chrono::Local::now().fixed_offset(),
            site: "s".into(),
            dose: record::example_dose(),
        })),
        &mut frame_bytes,
    )
    .unwrap();
    let mut file = OpenOptions::new().append(true).open(&path).unwrap();
    file.write_all(&frame_bytes[..frame_bytes.len() / 2])
        .unwrap();
    drop(file);

    let log = Log::open(&path, "tab-1").unwrap();
    let tail = log.recovery().torn_tail.unwrap();
    assert_eq!(tail.offset, clean_len);
    assert_eq!(tail.len, frame_bytes.len() as u64 / 2);
    assert!(log.recovery().messages()[0].contains("incomplete last record"));
    assert!(log.recovery().messages()[0].contains("cut off"));
    assert_eq!(std::fs::metadata(&path).unwrap().len(), clean_len);
    assert_eq!(notes(&log), ["a", "b"]);
    drop(log);
    assert!(Log::open(&path, "tab-1").unwrap().recovery().is_clean());
}

#[test]
fn flipped_byte_in_the_middle_is_reported_and_neighbours_survive() {
    let (_scratch, path, ids) = file_with(&["a", "b", "c"]);
    let log = Log::open(&path, "tab-1").unwrap();
    let middle = log.index.slot_of(ids[1].as_u128()).unwrap();
    let at = log.index.slots[middle as usize].offset + 100;
    drop(log);
    let mut bytes = std::fs::read(&path).unwrap();
    let len = bytes.len();
    bytes[at as usize] ^= 0x20;
    std::fs::write(&path, &bytes).unwrap();

    let mut log = Log::open(&path, "tab-1").unwrap();
    assert_eq!(log.recovery().damaged.len(), 1);
    let damage = log.recovery().damaged[0];
    assert!(damage.offset < at && at < damage.offset + damage.len);
    assert!(log.recovery().messages()[0].contains(&format!("byte {}", damage.offset)));
    assert_eq!(notes(&log), ["a", "c"]);
    assert_eq!(
        std::fs::metadata(&path).unwrap().len(),
        len as u64,
        "nothing truncated"
    );
    // Appending after damage keeps the damage on disk and adds after it.
    log.append(simple("d")).unwrap();
    drop(log);
    let log = Log::open(&path, "tab-1").unwrap();
    assert_eq!(notes(&log), ["a", "c", "d"]);
    assert_eq!(log.recovery().damaged, vec![damage]);
}

#[test]
fn zero_length_and_interrupted_header_start_a_new_log() {
    let dir = temp_dir("headers");
    for (name, bytes) in [("zero", &[][..]), ("half", &frame::header()[..7])] {
        let path = dir.join(name);
        std::fs::write(&path, bytes).unwrap();
        let mut log = Log::open(&path, "tab-1").unwrap();
        assert!(log.recovery().header_written, "{name}");
        let repaired = log.recovery().messages();
        if bytes.is_empty() {
            assert!(
                log.recovery().is_clean(),
                "an empty file is simply a new log"
            );
        } else {
            assert_eq!(log.recovery().header_repaired, Some(bytes.len() as u64));
            assert!(
                repaired[0].contains("incomplete log header (7 bytes"),
                "{repaired:?}"
            );
        }
        log.append(simple(name)).unwrap();
        drop(log);
        assert_eq!(notes(&Log::open(&path, "tab-1").unwrap()), [name]);
    }
}

#[test]
fn foreign_damaged_and_future_files_are_refused_untouched() {
    let dir = temp_dir("refuse");
    let mut future = frame::header();
    future[8..10].copy_from_slice(&2u16.to_le_bytes());
    let crc = crc32fast::hash(&future[..12]);
    future[12..].copy_from_slice(&crc.to_le_bytes());
    let mut damaged_header = frame::header().to_vec();
    damaged_header[13] ^= 1;
    let cases: [(&str, Vec<u8>, ErrorKind, &str); 4] = [
        (
            "text",
            b"hello, this is a note".to_vec(),
            ErrorKind::NotALog,
            "is not a dose log",
        ),
        (
            "short",
            b"PK".to_vec(),
            ErrorKind::NotALog,
            "shorter than a log header",
        ),
        (
            "future",
            future.to_vec(),
            ErrorKind::FutureVersion,
            "newer app (log format 2",
        ),
        ("header", damaged_header, ErrorKind::NotALog, "header of"),
    ];
    for (name, bytes, kind, words) in cases {
        let path = dir.join(name);
        std::fs::write(&path, &bytes).unwrap();
        let err = Log::open(&path, "tab-1").err().unwrap();
        assert_eq!(err.kind(), kind, "{name}");
        assert!(err.message().contains(words), "{name}: {}", err.message());
        assert_eq!(std::fs::read(&path).unwrap(), bytes, "{name} was modified");
    }
}

#[test]
fn read_only_storage_gives_a_typed_error() {
    // Tests run as root, for whom permission bits do not stop writes. sysfs refuses to create
    // files even for root, so /sys is real read-only storage here.
    let path = Path::new("/sys/molefeed-log-test.doselog");
    let err = Log::open(path, "tab-1").err().unwrap();
    assert_eq!(err.kind(), ErrorKind::ReadOnly, "{}", err.message());
    assert!(err.message().contains("read-only"));

    // A path below a regular file cannot be created by anyone, root included; and a missing
    // directory is never created for a log.
    let missing = temp_dir("nodir");
    let err = Log::open(&missing.join("a/b/site.doselog"), "tab-1")
        .err()
        .unwrap();
    assert_eq!(err.kind(), ErrorKind::Io, "{}", err.message());
    assert!(!missing.join("a").exists(), "a directory was created");

    let dir = temp_dir("notdir");
    let blocker = dir.join("blocker");
    std::fs::write(&blocker, b"x").unwrap();
    let err = Log::open(&blocker.join("site.doselog"), "tab-1")
        .err()
        .unwrap();
    assert_eq!(err.kind(), ErrorKind::Io, "{}", err.message());
    assert!(err.message().contains("site.doselog") || err.message().contains("blocker"));
}

#[test]
fn second_open_gets_the_lock_error() {
    let (_scratch, path, _) = file_with(&["a"]);
    let first = Log::open(&path, "tab-1").unwrap();
    let err = Log::open(&path, "tab-2").err().unwrap();
    assert_eq!(err.kind(), ErrorKind::Locked);
    assert!(err.message().contains("another copy of the app"));
    drop(first);
    assert!(Log::open(&path, "tab-2").is_ok());
}

#[test]
fn corrections_and_voids_are_new_records_and_history_keeps_all() {
    let (_scratch, path, ids) = file_with(&["a", "b"]);
    let mut log = Log::open(&path, "tab-1").unwrap();
    let mut fixed = record::example_dose();
    fixed.tap = "outlet".into();
    fixed.note = "a fixed".into();
    let correction = log
        .append(Draft::Correction {
            at: None,
            corrects: ids[0],
            reason: "wrong tap".into(),
            dose: fixed,
        })
        .unwrap();
    let void = log
        .append(Draft::Void {
            at: None,
            operator: "AB".into(),
            voids: ids[1],
            reason: "entered twice".into(),
        })
        .unwrap();
    assert_eq!(log.record_count(), 4);
    let Some(Record::Correction(stored)) = log.get(correction).unwrap() else {
        panic!("the correction is stored as one")
    };
    assert_eq!(
        stored.at.timestamp_subsec_nanos() % 1_000_000,
        0,
        "times kept to the millisecond"
    );
    let current = log.current().unwrap();
    assert_eq!(current.len(), 1);
    assert_eq!(current[0].id, ids[0]);
    assert_eq!(current[0].status, Status::Corrected);
    assert_eq!(current[0].dose.tap, "outlet");
    assert_eq!(current[0].last_change.as_ref().unwrap().reason, "wrong tap");

    let history = log.history(ids[0]).unwrap();
    assert_eq!(history.len(), 2);
    assert_eq!(history[1].id(), correction);
    let Record::Entry(original) = &history[0] else {
        panic!("history starts with the entry")
    };
    assert_eq!(original.dose.tap, "inlet", "the original is unchanged");

    let all = log
        .query(&Query {
            include_voided: true,
            ..Query::default()
        })
        .unwrap();
    assert_eq!(all[1].status, Status::Voided);
    assert_eq!(all[1].last_change.as_ref().unwrap().id, void);

    let unknown = log
        .append(Draft::Void {
            at: None,
            operator: "AB".into(),
            voids: Uuid::now_v7(),
            reason: "x".into(),
        })
        .unwrap_err();
    assert_eq!(unknown.kind(), ErrorKind::UnknownReference);
    assert!(log.pending().is_empty(), "a refused draft is not pending");
}

#[test]
fn queries_by_date_tap_chemical_and_latest_per_point() {
    let scratch = temp_dir("query");
    let path = scratch.join("q.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    let drafts = [
        ("inlet", "chlorine", "2026-02-28T23:30:00-03:00", "feb"),
        ("inlet", "chlorine", "2026-03-01T00:10:00+02:00", "mar1"),
        ("inlet", "alum", "2026-03-15T10:00:00+00:00", "alum"),
        ("outlet", "chlorine", "2026-03-31T23:59:00+05:00", "mar31"),
        ("inlet", "chlorine", "2026-04-01T00:00:00+00:00", "apr"),
    ];
    for (tap, chemical, at, note) in drafts {
        log.append(entry(tap, chemical, at, note)).unwrap();
    }
    let date = |s: &str| NaiveDate::parse_from_str(s, "%Y-%m-%d").ok();
    let q = |from, to, tap: Option<&str>, chemical: Option<&str>| {
        let views = log
            .query(&Query {
                from: date(from),
                to: date(to),
                tap: tap.map(String::from),
                chemical: chemical.map(String::from),
                include_voided: false,
                only: None,
                readings: false,
            })
            .unwrap();
        views.into_iter().map(|v| v.dose.note).collect::<Vec<_>>()
    };
    // Local calendar days: 23:30 at -03:00 is still February for that operator.
    assert_eq!(
        q("2026-03-01", "2026-03-31", None, None),
        ["mar1", "alum", "mar31"]
    );
    assert_eq!(q("2026-02-01", "2026-02-28", None, None), ["feb"]);
    assert_eq!(q("", "", Some("outlet"), None), ["mar31"]);
    assert_eq!(q("", "", None, Some("alum")), ["alum"]);
    assert_eq!(q("", "", Some("nowhere"), None), Vec::<String>::new());
    let latest: Vec<String> = log
        .latest_per_point()
        .unwrap()
        .into_iter()
        .map(|v| v.dose.note)
        .collect();
    assert_eq!(latest, ["alum", "mar31", "apr"]);
}

#[test]
fn a_query_naming_entries_keeps_only_those_and_still_honours_the_other_filters() {
    let scratch = temp_dir("only");
    let mut log = Log::open(&scratch.join("o.doselog"), "tab-1").unwrap();
    let mut ids = Vec::new();
    for (tap, note) in [("inlet", "one"), ("outlet", "two"), ("inlet", "three")] {
        ids.push(
            log.append(entry(tap, "chlorine", "2026-03-04T08:00:00+00:00", note))
                .unwrap(),
        );
    }
    log.append(Draft::Void {
        at: None,
        operator: "AB".into(),
        voids: ids[2],
        reason: "twice".into(),
    })
    .unwrap();
    let q = |only: &[Uuid], tap: Option<&str>, include_voided: bool| {
        log.query(&Query {
            tap: tap.map(String::from),
            include_voided,
            only: Some(only.iter().copied().collect()),
            ..Query::default()
        })
        .unwrap()
        .into_iter()
        .map(|v| v.dose.note)
        .collect::<Vec<_>>()
    };
    assert_eq!(q(&[ids[0], ids[2]], None, true), ["one", "three"]);
    assert_eq!(q(&[ids[0], ids[2]], None, false), ["one"]);
    assert_eq!(q(&[ids[1], ids[2]], Some("inlet"), true), ["three"]);
    assert_eq!(q(&[], None, true), Vec::<String>::new());
}

#[test]
fn merge_adds_once_and_reports_conflicts() {
    let dir = temp_dir("merge");
    let (a_path, b_path) = (dir.join("a.doselog"), dir.join("b.doselog"));
    let mut a = Log::open(&a_path, "tab-a").unwrap();
    let mut b = Log::open(&b_path, "tab-b").unwrap();
    a.append(simple("from a")).unwrap();
    let b_id = b.append(simple("from b")).unwrap();
    b.append(Draft::Void {
        at: None,
        operator: "CD".into(),
        voids: b_id,
        reason: "test".into(),
    })
    .unwrap();
    b.append(simple("b again")).unwrap();
    drop(b);

    let itself = a.merge_from(&a_path).unwrap_err();
    assert_eq!(itself.kind(), ErrorKind::SameLog);
    assert!(itself.message().contains("this log itself"));

    let first = a.merge_from(&b_path).unwrap();
    assert_eq!((first.added, first.already_present), (3, 0));
    assert!(first.conflicting.is_empty());
    // Another device's torn tail is reported, and its file is left exactly as it was.
    OpenOptions::new()
        .append(true)
        .open(&b_path)
        .unwrap()
        .write_all(&[&frame::RECORD_MARK[..], &[40, 0]].concat())
        .unwrap();
    let b_bytes = std::fs::read(&b_path).unwrap();
    let second = a.merge_from(&b_path).unwrap();
    assert_eq!((second.added, second.already_present), (0, 3));
    assert!(second.source_recovery.torn_tail.is_some());
    assert!(!second.source_recovery.tail_cut);
    assert_eq!(
        std::fs::read(&b_path).unwrap(),
        b_bytes,
        "the source is never modified"
    );
    assert_eq!(a.record_count(), 4);
    assert_eq!(notes(&a), ["from a", "b again"]);

    // Forge a record in b with an id that a already has but different content.
    let mut forged = a.get(b_id).unwrap().unwrap();
    if let Record::Entry(e) = &mut forged {
        e.dose.note = "changed".into();
    }
    let c_path = dir.join("c.doselog");
    drop(Log::open(&c_path, "tab-c").unwrap());
    let mut bytes = std::fs::read(&c_path).unwrap();
    frame::encode(&record::encode(&forged), &mut bytes).unwrap();
    std::fs::write(&c_path, &bytes).unwrap();
    let third = a.merge_from(&c_path).unwrap();
    assert_eq!(third.conflicting, vec![b_id]);
    assert_eq!(third.added, 0);
    let Some(Record::Entry(kept)) = a.get(b_id).unwrap() else {
        panic!("entry missing")
    };
    assert_eq!(kept.dose.note, "from b", "a conflict never overwrites");
}

#[test]
fn site_files_have_portable_names_inside_the_given_directory() {
    let dir = Path::new("/data/user/0/app/files");
    let path = site_file(dir, "Riverside / North: \"old\" works");
    assert_eq!(path.parent(), Some(dir));
    assert_eq!(
        path.file_name().and_then(|n| n.to_str()),
        Some("Riverside___North___old__works.doselog")
    );
}

/// The bytes and modification time of a file, to show that a read left it alone.
fn snapshot(path: &Path) -> (Vec<u8>, std::time::SystemTime) {
    (
        std::fs::read(path).unwrap(),
        std::fs::metadata(path).unwrap().modified().unwrap(),
    )
}

#[test]
fn a_reader_never_writes_a_header_or_cuts_a_tail() {
    let (scratch, path, _) = file_with(&["a", "b"]);
    let mut half = Vec::new();
    frame::encode(
        &record::encode(&foreign_entry("x", "2026-03-04T08:00:00+00:00")),
        &mut half,
    )
    .unwrap();
    half.truncate(half.len() / 2);
    OpenOptions::new()
        .append(true)
        .open(&path)
        .unwrap()
        .write_all(&half)
        .unwrap();
    let before = snapshot(&path);
    std::thread::sleep(std::time::Duration::from_millis(20));
    let reader = Log::open_read_only(&path).unwrap();
    assert_eq!(notes(&reader), ["a", "b"]);
    assert!(reader.recovery().torn_tail.is_some());
    assert!(!reader.recovery().tail_cut);
    assert!(reader.recovery().messages()[0].contains("left in place"));
    drop(reader);
    assert_eq!(snapshot(&path), before, "a read changed the file");

    // An empty file reached through a symlink stays empty for a reader.
    let empty = scratch.join("empty.doselog");
    std::fs::write(&empty, b"").unwrap();
    let link = scratch.join("link.doselog");
    std::os::unix::fs::symlink(&empty, &link).unwrap();
    let err = Log::open_read_only(&link).err().unwrap();
    assert_eq!(err.kind(), ErrorKind::NotALog, "{}", err.message());
    assert_eq!(std::fs::read(&empty).unwrap(), b"", "a header was written");
}

#[test]
fn a_reader_shares_the_file_with_a_writer_and_a_second_writer_does_not() {
    let (_scratch, path, _) = file_with(&["a"]);
    let mut writer = Log::open(&path, "tab-1").unwrap();
    let reader = Log::open_read_only(&path).unwrap();
    writer.append(simple("b")).unwrap();
    assert_eq!(notes(&reader), ["a"], "the reader's view is what it opened");
    assert_eq!(notes(&Log::open_read_only(&path).unwrap()), ["a", "b"]);
    let err = Log::open(&path, "tab-2").err().unwrap();
    assert_eq!(err.kind(), ErrorKind::Locked);
}

#[test]
fn a_flipped_byte_in_the_last_record_is_damage_kept_on_disk() {
    let (_scratch, path, ids) = file_with(&["a", "b", "c"]);
    let log = Log::open(&path, "tab-1").unwrap();
    let last = log.index.slot_of(ids[2].as_u128()).unwrap();
    let at = log.index.slots[last as usize].offset + 60;
    drop(log);
    let mut bytes = std::fs::read(&path).unwrap();
    bytes[at as usize] ^= 0x04;
    std::fs::write(&path, &bytes).unwrap();

    let mut log = Log::open(&path, "tab-1").unwrap();
    assert_eq!(log.recovery().torn_tail, None);
    assert_eq!(log.recovery().damaged.len(), 1, "{:?}", log.recovery());
    assert_eq!(
        std::fs::read(&path).unwrap(),
        bytes,
        "the writer cut the record"
    );
    assert_eq!(notes(&log), ["a", "b"]);
    log.append(simple("d")).unwrap();
    drop(log);
    let log = Log::open(&path, "tab-1").unwrap();
    assert_eq!(notes(&log), ["a", "b", "d"]);
    assert_eq!(&std::fs::read(&path).unwrap()[..bytes.len()], &bytes[..]);
}

#[test]
fn a_writer_whose_file_is_deleted_or_replaced_acknowledges_nothing_more() {
    let (scratch, path, _) = file_with(&["a"]);
    let mut log = Log::open(&path, "tab-1").unwrap();
    std::fs::remove_file(&path).unwrap();
    let err = log.append(simple("lost")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::FileReplaced, "{}", err.message());
    assert!(err.message().contains("deleted or replaced"));
    assert_eq!(log.pending().len(), 1, "the entry is kept as not saved");
    let again = log.append(simple("also lost")).unwrap_err();
    assert_eq!(again.kind(), ErrorKind::FileReplaced);
    assert_eq!(log.pending().len(), 2);
    drop(log);

    // Another file moved into its place.
    let (_other_scratch, other, _) = file_with(&["other"]);
    let mut log = Log::open(&scratch.join("fresh.doselog"), "tab-1").unwrap();
    log.append(simple("saved")).unwrap();
    std::fs::rename(&other, scratch.join("fresh.doselog")).unwrap();
    let err = log.append(simple("lost")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::FileReplaced);
}

#[test]
fn a_flipped_header_bit_is_damage_and_salvage_recovers_every_record() {
    let (scratch, path, _) = file_with(&["a", "b", "c"]);
    let mut bytes = std::fs::read(&path).unwrap();
    bytes[9] ^= 0x40; // version 1 would read as 16385
    std::fs::write(&path, &bytes).unwrap();
    let err = Log::open(&path, "tab-1").err().unwrap();
    assert_eq!(err.kind(), ErrorKind::NotALog, "{}", err.message());
    assert_eq!(err.param("reason"), Some("damaged-header"));
    assert!(err.message().contains("damaged"), "{}", err.message());
    assert!(!err.message().contains("newer"), "{}", err.message());

    let before = snapshot(&path);
    let saved = scratch.join("saved.doselog");
    let report = salvage(&path, &saved).unwrap();
    assert_eq!(report.records, 3);
    assert!(!report.header_intact);
    assert!(report.damaged.is_empty());
    assert_eq!(snapshot(&path), before, "salvage changed the damaged file");
    let log = Log::open(&saved, "tab-1").unwrap();
    assert!(log.recovery().is_clean(), "{:?}", log.recovery());
    assert_eq!(notes(&log), ["a", "b", "c"]);
    drop(log);

    // Never over an existing file.
    let kept = snapshot(&saved);
    let err = salvage(&path, &saved).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::Io, "{}", err.message());
    assert_eq!(snapshot(&saved), kept);
    // Nothing to salvage from a file that is no log, and no file is left behind.
    let text = scratch.join("text.txt");
    std::fs::write(&text, b"just some words, no records at all").unwrap();
    let err = salvage(&text, &scratch.join("none.doselog")).unwrap_err();
    assert_eq!(err.kind(), ErrorKind::NotALog);
    assert!(!scratch.join("none.doselog").exists());
}

fn foreign_entry(note: &str, at: &str) -> Record {
    let mut dose = record::example_dose();
    dose.note = note.into();
    Record::Entry(Entry {
        id: Uuid::now_v7(),
        device: "tab-b".into(),
        at: DateTime::parse_from_rfc3339(at).unwrap(),
        site: "Riverside".into(),
        dose,
    })
}

/// A log file holding exactly these payloads, framed as a device would write them.
fn crafted_log(path: &Path, payloads: &[Vec<u8>]) {
    let mut bytes = frame::header().to_vec();
    for p in payloads {
        frame::encode(p, &mut bytes).unwrap();
    }
    std::fs::write(path, bytes).unwrap();
}

#[test]
fn merge_checks_each_record_as_a_whole_and_reports_what_it_left_out() {
    let dir = temp_dir("merge-checks");
    let (a_path, b_path) = (dir.join("a.doselog"), dir.join("b.doselog"));
    let mut a = Log::open(&a_path, "tab-a").unwrap();
    let ours = a.append(simple("ours")).unwrap();
    let now = DateTime::parse_from_rfc3339("2026-11-10T12:00:00+00:00").unwrap();

    let good = foreign_entry("good", "2026-11-05T09:00:00+00:00");
    // Body 5 Nov at the inlet; key 1970 and another tap.
    let lying = foreign_entry("lying", "2026-11-05T10:00:00+00:00");
    let mut lying_payload = record::encode(&lying);
    lying_payload[18..26].copy_from_slice(&0i64.to_le_bytes());
    // The key's tap starts after the fixed key (44 bytes) and its length: "clearwell inlet".
    lying_payload[46] ^= 0x20;
    let correction = |corrects: Uuid, site: &str, at: &str| {
        let mut dose = record::example_dose();
        dose.note = "corrected".into();
        Record::Correction(Correction {
            id: Uuid::now_v7(),
            device: "tab-b".into(),
            at: DateTime::parse_from_rfc3339(at).unwrap(),
            site: site.into(),
            corrects,
            reason: "typo".into(),
            dose,
        })
    };
    let far_future = correction(ours, "Riverside", "9999-12-31T00:00:00+00:00");
    let within = correction(good.id(), "Riverside", "2026-11-10T12:30:00+00:00");
    let orphan_void = Record::Void(Void {
        id: Uuid::now_v7(),
        device: "tab-b".into(),
        at: DateTime::parse_from_rfc3339("2026-11-06T09:00:00+00:00").unwrap(),
        site: "Riverside".into(),
        operator: "CD".into(),
        voids: Uuid::now_v7(),
        reason: "hide it".into(),
    });
    let other_site = correction(ours, "Hilltop", "2026-11-06T09:00:00+00:00");
    let mut second_copy = good.clone();
    if let Record::Entry(e) = &mut second_copy {
        e.dose.note = "second version".into();
    }
    crafted_log(
        &b_path,
        &[
            record::encode(&within),
            record::encode(&good),
            lying_payload,
            record::encode(&far_future),
            record::encode(&orphan_void),
            record::encode(&other_site),
            record::encode(&second_copy),
        ],
    );

    let report = a.merge_at(&b_path, now).unwrap();
    assert_eq!(report.added, 2, "{report:?}");
    let refused: Vec<(Option<Uuid>, &str)> = report
        .refused
        .iter()
        .map(|r| (r.id, r.reason.as_str()))
        .collect();
    let reason_of = |id: Uuid| {
        refused
            .iter()
            .find(|(i, _)| *i == Some(id))
            .map(|(_, r)| *r)
            .unwrap_or_else(|| panic!("{id} not refused: {refused:?}"))
    };
    assert!(reason_of(lying.id()).contains("key and body disagree"));
    assert!(reason_of(far_future.id()).contains("after this device's clock"));
    assert!(reason_of(orphan_void.id()).contains("neither in this log"));
    assert!(reason_of(other_site.id()).contains("site 'Hilltop'"));
    assert_eq!(report.refused.len(), 4);
    assert_eq!(report.dropped_duplicates, vec![good.id()]);
    assert_eq!(report.unreadable, 4);

    // What was imported is found by date and tap; the entry stands as corrected here.
    let november = Query {
        from: NaiveDate::from_ymd_opt(2026, 11, 1),
        to: NaiveDate::from_ymd_opt(2026, 11, 30),
        ..Query::default()
    };
    let views = a.query(&november).unwrap();
    assert_eq!(views.len(), 1);
    assert_eq!(views[0].id, good.id());
    assert_eq!(views[0].dose.note, "corrected");
    assert!(a.get(lying.id()).unwrap().is_none());
    let mine = a.query(&Query::default()).unwrap();
    let mine = mine.iter().find(|v| v.id == ours).unwrap();
    assert_eq!(
        mine.status,
        Status::Original,
        "no imported revision reached it"
    );
}

/// A record dated ahead of this device's clock would outrank every later correction made here
/// (the latest by time wins): refused when appended, as an import refuses it, and nothing is
/// written. Within the clock tolerance (one hour) it is kept.
#[test]
fn a_record_dated_ahead_of_the_clock_is_refused() {
    let dir = temp_dir("ahead");
    let path = dir.join("plant.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    let now = Some(DateTime::parse_from_rfc3339("2026-03-04T08:00:00+01:00").unwrap());
    let original = log
        .append_at(
            entry("inlet", "chlorine", "2026-03-04T07:00:00+01:00", "a"),
            now,
        )
        .unwrap();
    for at in ["9999-01-01T00:00:00Z", "2026-03-04T09:01:00+01:00"] {
        let e = log
            .append_at(entry("inlet", "chlorine", at, "ahead"), now)
            .unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidEntry, "{at}");
        let mut fixed = record::example_dose();
        fixed.note = "ahead".into();
        let e = log
            .append_at(
                Draft::Correction {
                    at: Some(DateTime::parse_from_rfc3339(at).unwrap()),
                    corrects: original,
                    reason: "dated ahead".into(),
                    dose: fixed,
                },
                now,
            )
            .unwrap_err();
        assert_eq!(e.kind(), ErrorKind::InvalidEntry, "{at}");
    }
    log.append_at(
        entry("inlet", "chlorine", "2026-03-04T08:59:00+01:00", "b"),
        now,
    )
    .unwrap();
    assert_eq!(notes(&log), ["a", "b"]);
}

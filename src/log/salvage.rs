//! Copying the intact records of a log whose header is damaged into a new log.
//!
//! A damaged header makes a log refuse to open, since nothing in it can be trusted to be this
//! format; yet each record carries its own mark and checksum, so one flipped bit in the
//! header need not cost the records.
//!
//! Design choice: salvage never writes to the damaged file (it is opened read-only under a
//! shared lock) and never overwrites anything: the new file must not exist yet. It copies each
//! checksum-intact frame's payload byte for byte behind a fresh header, whatever the payload
//! says (the new log reports records it cannot read, as any log does), so nothing is judged
//! away here. A header that is intact and names a newer format is refused: its frames may not
//! be ours to parse.

use super::{Error, ErrorKind, FileStorage, Result, Span, frame, lock, sync_dir};
use serde::Serialize;
use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::Path;

/// What salvage found and copied.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct SalvageReport {
    /// Whether the source's header was intact (salvage also copies a healthy log).
    pub header_intact: bool,
    /// Intact records copied into the new log, in file order.
    pub records: usize,
    /// Regions of the source that held no intact record.
    pub damaged: Vec<Span>,
    /// An incomplete record at the end of the source.
    pub torn_tail: Option<Span>,
}

/// Copies every intact record of the log file at `damaged` into a new log at `to`.
pub fn salvage(damaged: &Path, to: &Path) -> Result<SalvageReport> {
    let file = File::open(damaged).map_err(|e| Error::io("opening", damaged, &e))?;
    lock(&file, damaged, false)?;
    let source = FileStorage::new(file, damaged);
    let mut head = [0u8; frame::HEADER_LEN as usize];
    let head_len = frame::ReadAt::byte_len(&source)
        .map_err(|e| Error::io("reading", damaged, &e))?
        .min(frame::HEADER_LEN) as usize;
    frame::ReadAt::read_exact_at(&source, 0, &mut head[..head_len])
        .map_err(|e| Error::io("reading", damaged, &e))?;
    let check = frame::check_header(&head[..head_len]);
    if let frame::HeaderCheck::Future(version) = check {
        return Err(Error::new(
            ErrorKind::FutureVersion,
            format!(
                "{} has an intact header of log format {version}, newer than this app; open it with a newer app",
                damaged.display()
            ),
        )
        .with("path", damaged.display())
        .with("version", version));
    }
    let mut out = OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(to)
        .map_err(|e| Error::io("creating", to, &e))?;
    let copied = copy_frames(&source, &mut out, to);
    let result = copied.and_then(|(records, outcome)| {
        if records == 0 && check != frame::HeaderCheck::Valid {
            return Err(Error::new(
                ErrorKind::NotALog,
                format!(
                    "no intact log record found in {}; nothing to salvage",
                    damaged.display()
                ),
            )
            .with("path", damaged.display()));
        }
        out.sync_all().map_err(|e| Error::io("syncing", to, &e))?;
        if let Some(dir) = to.parent().filter(|p| !p.as_os_str().is_empty()) {
            sync_dir(dir).map_err(|e| Error::io("syncing", dir, &e))?;
        }
        Ok(SalvageReport {
            header_intact: check == frame::HeaderCheck::Valid,
            records,
            damaged: outcome.damaged,
            torn_tail: outcome.torn_tail,
        })
    });
    if result.is_err() {
        // Half a salvage must not pass for a log; the file is ours, created just now.
        drop(out);
        let _ = std::fs::remove_file(to);
    }
    result
}

/// Writes a header and then every intact frame of `source`; returns how many frames.
fn copy_frames(
    source: &FileStorage,
    out: &mut File,
    to: &Path,
) -> Result<(usize, frame::ScanOutcome)> {
    let mut writer = std::io::BufWriter::with_capacity(1 << 20, &mut *out);
    let mut failure = writer.write_all(&frame::header()).err();
    let mut records = 0;
    let mut framed = Vec::new();
    let outcome = frame::scan(source, |_, payload| {
        if failure.is_some() {
            return;
        }
        framed.clear();
        // A payload that came out of a frame fits in one.
        if frame::encode(payload, &mut framed).is_ok() {
            failure = writer.write_all(&framed).err();
            records += 1;
        }
    })
    .map_err(|e| Error::io("reading", &source.path, &e))?;
    if let Some(e) = failure.or_else(|| writer.flush().err()) {
        return Err(Error::io("writing", to, &e));
    }
    Ok((records, outcome))
}

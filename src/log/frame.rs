//! On-disk framing of the dose log: a file header, length-and-checksum frames, and the
//! recovery scan that finds every intact frame.
//!
//! Layout: a 16-byte header (8-byte magic, format version, flags, CRC-32 of the first 12
//! bytes), then frames: a 4-byte record mark, the payload length and a CRC-32 over the length
//! and the payload. The payload is opaque here (see `record.rs`).
//!
//! Design choice: the record mark starts with byte 0xF7, which never occurs in UTF-8 text, so
//! after damage in the middle of the file the scan can resynchronise on the next mark and keep
//! every intact record after the damage instead of truncating it away. A bad region with no
//! intact frame after it is a torn tail only when it can be nothing but an interrupted write
//! (a proper prefix of a frame, or zeros); otherwise it may be an acknowledged record damaged
//! later, and it is reported as damage and kept. The scan reads through a sliding window
//! rather than loading the whole file, so opening a large log does not double its memory.
//!
//! Resynchronising stays linear in the file size even when every byte could start a frame
//! claiming a megabyte: after the first bad frame, one pass keeps a running CRC of the file
//! and checks each candidate frame from two snapshots of it (at the payload's start and end)
//! with CRC-32's combine rule, instead of hashing each candidate's payload again.

use std::io;

/// Identifies a dose log file. Chosen for this app; not shared with any other format.
pub const MAGIC: [u8; 8] = *b"MOLEFDL\0";
/// The newest file format this build reads and writes.
pub const FORMAT_VERSION: u16 = 1;
pub const HEADER_LEN: u64 = 16;
/// Starts every frame; 0xF7 and 0xF5 cannot appear in the UTF-8 JSON of a payload.
pub const RECORD_MARK: [u8; 4] = [0xF7, b'd', b'r', 0xF5];
/// Mark, length and checksum in front of every payload.
pub const FRAME_OVERHEAD: u64 = 12;
/// A larger length field is damage, not a record: no dose entry comes near it.
pub const MAX_PAYLOAD: u32 = 1 << 20;

/// The header for a new file in the current format.
pub fn header() -> [u8; HEADER_LEN as usize] {
    let mut h = [0u8; HEADER_LEN as usize];
    h[..8].copy_from_slice(&MAGIC);
    h[8..10].copy_from_slice(&FORMAT_VERSION.to_le_bytes());
    // Bytes 10..12 are flags, zero in version 1.
    let crc = crc32fast::hash(&h[..12]);
    h[12..].copy_from_slice(&crc.to_le_bytes());
    h
}

/// What the first bytes of a file say about it.
#[derive(Debug, PartialEq, Eq)]
pub enum HeaderCheck {
    Valid,
    /// No bytes at all: a file created by a process that died before writing the header.
    Empty,
    /// A proper prefix of our own header: creation was interrupted, no record can exist.
    Truncated,
    /// Not our magic; the reason says why.
    NotALog(&'static str),
    /// Our magic with a header that fails its checksum: the records after it may be intact
    /// (see `Log::salvage`).
    Damaged,
    /// Written by a newer format version.
    Future(u16),
}

/// Classifies a file from its first bytes (up to [`HEADER_LEN`] of them).
pub fn check_header(bytes: &[u8]) -> HeaderCheck {
    let ours = header();
    if bytes.is_empty() {
        return HeaderCheck::Empty;
    }
    if bytes.len() < ours.len() {
        return if bytes == &ours[..bytes.len()] {
            HeaderCheck::Truncated
        } else {
            HeaderCheck::NotALog("the file is shorter than a log header and is not one")
        };
    }
    if bytes[..8] != MAGIC {
        return HeaderCheck::NotALog("the file does not start with the dose log mark");
    }
    // The checksum first: a flipped bit in the version field is damage, and must not read as
    // a file from a newer app.
    let stored = u32::from_le_bytes([bytes[12], bytes[13], bytes[14], bytes[15]]);
    if crc32fast::hash(&bytes[..12]) != stored {
        return HeaderCheck::Damaged;
    }
    let version = u16::from_le_bytes([bytes[8], bytes[9]]);
    if version > FORMAT_VERSION {
        return HeaderCheck::Future(version);
    }
    if version == 0 {
        return HeaderCheck::Damaged;
    }
    HeaderCheck::Valid
}

/// Appends one frame for `payload` to `out`; `Err(len)` if the payload is too large.
pub fn encode(payload: &[u8], out: &mut Vec<u8>) -> Result<(), usize> {
    let len = u32::try_from(payload.len())
        .ok()
        .filter(|&l| l <= MAX_PAYLOAD)
        .ok_or(payload.len())?;
    let len_bytes = len.to_le_bytes();
    let mut crc = crc32fast::Hasher::new();
    crc.update(&len_bytes);
    crc.update(payload);
    out.reserve(FRAME_OVERHEAD as usize + payload.len());
    out.extend_from_slice(&RECORD_MARK);
    out.extend_from_slice(&len_bytes);
    out.extend_from_slice(&crc.finalize().to_le_bytes());
    out.extend_from_slice(payload);
    Ok(())
}

/// Random-access reading, so the scan works on files and on in-memory test data alike.
pub trait ReadAt {
    fn byte_len(&self) -> io::Result<u64>;
    /// Fills `buf` from `offset`; an error if fewer bytes exist.
    fn read_exact_at(&self, offset: u64, buf: &mut [u8]) -> io::Result<()>;
}

impl ReadAt for [u8] {
    fn byte_len(&self) -> io::Result<u64> {
        Ok(<[u8]>::len(self) as u64)
    }

    fn read_exact_at(&self, offset: u64, buf: &mut [u8]) -> io::Result<()> {
        let start = usize::try_from(offset).map_err(|_| io::ErrorKind::UnexpectedEof)?;
        let bytes = self
            .get(start..start.saturating_add(buf.len()))
            .ok_or(io::ErrorKind::UnexpectedEof)?;
        buf.copy_from_slice(bytes);
        Ok(())
    }
}

/// A byte range of the file, for reports: where it starts and how long it is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
pub struct Span {
    pub offset: u64,
    pub len: u64,
}

/// What the scan found besides the intact records.
#[derive(Debug, Default, PartialEq, Eq)]
pub struct ScanOutcome {
    /// Bad regions with intact frames after them: reported, kept on disk.
    pub damaged: Vec<Span>,
    /// A bad region that runs to the end of the file: an interrupted write.
    pub torn_tail: Option<Span>,
    /// End of the last intact frame: where the next append goes once the tail is cut.
    pub end: u64,
}

const WINDOW: usize = 1 << 20;

/// A sliding read window: sequential frames cost one read per megabyte.
pub(crate) struct Window<'a, R: ReadAt + ?Sized> {
    source: &'a R,
    file_len: u64,
    start: u64,
    buf: Vec<u8>,
}

impl<'a, R: ReadAt + ?Sized> Window<'a, R> {
    pub(crate) fn new(source: &'a R) -> io::Result<Self> {
        Ok(Window {
            source,
            file_len: source.byte_len()?,
            start: 0,
            buf: Vec::new(),
        })
    }

    /// `len` bytes at `offset`, read ahead by up to a megabyte.
    pub(crate) fn get(&mut self, offset: u64, len: usize) -> io::Result<&[u8]> {
        if offset
            .checked_add(len as u64)
            .is_none_or(|end| end > self.file_len)
        {
            return Err(io::ErrorKind::UnexpectedEof.into());
        }
        let inside =
            offset >= self.start && offset + len as u64 <= self.start + self.buf.len() as u64;
        if !inside {
            let want = (len.max(WINDOW) as u64).min(self.file_len - offset) as usize;
            self.buf.resize(want, 0);
            self.source.read_exact_at(offset, &mut self.buf)?;
            self.start = offset;
        }
        let at = (offset - self.start) as usize;
        Ok(&self.buf[at..at + len])
    }

    /// Checks the frame at `offset`; on success hands its payload to `on_record` and returns
    /// the frame's end.
    fn frame(
        &mut self,
        offset: u64,
        on_record: &mut dyn FnMut(u64, &[u8]),
    ) -> io::Result<Option<u64>> {
        if self.file_len - offset < FRAME_OVERHEAD {
            return Ok(None);
        }
        let head = self.get(offset, FRAME_OVERHEAD as usize)?;
        if head[..4] != RECORD_MARK {
            return Ok(None);
        }
        let len_bytes = [head[4], head[5], head[6], head[7]];
        let stored = u32::from_le_bytes([head[8], head[9], head[10], head[11]]);
        let len = u32::from_le_bytes(len_bytes);
        let end = offset + FRAME_OVERHEAD + len as u64;
        if len > MAX_PAYLOAD || end > self.file_len {
            return Ok(None);
        }
        let payload = self.get(offset + FRAME_OVERHEAD, len as usize)?;
        let mut crc = crc32fast::Hasher::new();
        crc.update(&len_bytes);
        crc.update(payload);
        if crc.finalize() != stored {
            return Ok(None);
        }
        on_record(offset, payload);
        Ok(Some(end))
    }
}

/// Walks every frame after the header, calling `on_record(frame_offset, payload)` for each
/// intact one in file order, and reports damaged regions and a torn tail.
pub fn scan<R: ReadAt + ?Sized>(
    source: &R,
    mut on_record: impl FnMut(u64, &[u8]),
) -> io::Result<ScanOutcome> {
    let mut window = Window::new(source)?;
    let file_len = window.file_len;
    let mut outcome = ScanOutcome {
        end: HEADER_LEN.min(file_len),
        ..ScanOutcome::default()
    };
    // Fast path: a healthy log is one frame after another, each hashed once.
    let mut offset = HEADER_LEN;
    while offset < file_len {
        match window.frame(offset, &mut on_record)? {
            Some(end) => {
                offset = end;
                outcome.end = end;
            }
            None => break,
        }
    }
    if offset >= file_len {
        return Ok(outcome);
    }
    // Something is wrong at `offset`: find every intact frame after it in one pass, then
    // follow the chain through them.
    let intact = intact_frames_after(source, offset)?;
    let mut next = 0;
    loop {
        while intact.get(next).is_some_and(|&(start, _)| start < offset) {
            next += 1;
        }
        if offset >= file_len {
            break;
        }
        let Some(&(start, end)) = intact.get(next) else {
            let rest = Span {
                offset,
                len: file_len - offset,
            };
            if is_interrupted_write(&mut window, rest)? {
                outcome.torn_tail = Some(rest);
            } else {
                // May be an acknowledged record damaged later: keep it, append after it.
                outcome.damaged.push(rest);
                outcome.end = file_len;
            }
            break;
        };
        if start > offset {
            outcome.damaged.push(Span {
                offset,
                len: start - offset,
            });
        }
        let payload = window.get(
            start + FRAME_OVERHEAD,
            (end - start - FRAME_OVERHEAD) as usize,
        )?;
        on_record(start, payload);
        offset = end;
        outcome.end = end;
        next += 1;
    }
    Ok(outcome)
}

/// Whether the bad bytes at the end of a file can only be an interrupted write, which no
/// acknowledged record can be: a proper prefix of a frame as this app writes them (the mark,
/// then a length that runs past the end of the file), or zeros left by a crash after the file
/// grew but before its data arrived. A complete frame with a bad checksum, a length field whose
/// true value makes the checksum match, or other bytes are damage.
fn is_interrupted_write<R: ReadAt + ?Sized>(
    window: &mut Window<'_, R>,
    rest: Span,
) -> io::Result<bool> {
    let head_len = rest.len.min(FRAME_OVERHEAD) as usize;
    let head = window.get(rest.offset, head_len)?.to_vec();
    let mark_len = head_len.min(RECORD_MARK.len());
    if head[..mark_len] == RECORD_MARK[..mark_len] {
        if head_len < 8 {
            return Ok(true);
        }
        let len = u32::from_le_bytes([head[4], head[5], head[6], head[7]]);
        if len > MAX_PAYLOAD || FRAME_OVERHEAD + len as u64 <= rest.len {
            return Ok(false);
        }
        if head_len < FRAME_OVERHEAD as usize {
            return Ok(true);
        }
        // A damaged length field of a complete last frame also "runs past the end": check the
        // checksum with the length the remaining bytes actually have.
        let present = rest.len - FRAME_OVERHEAD;
        let stored = u32::from_le_bytes([head[8], head[9], head[10], head[11]]);
        let mut crc = crc32fast::Hasher::new();
        crc.update(&(present as u32).to_le_bytes());
        crc.update(window.get(rest.offset + FRAME_OVERHEAD, present as usize)?);
        return Ok(crc.finalize() != stored);
    }
    let mut at = rest.offset;
    let end = rest.offset + rest.len;
    while at < end {
        let n = (end - at).min(WINDOW as u64) as usize;
        if window.get(at, n)?.iter().any(|&b| b != 0) {
            return Ok(false);
        }
        at += n as u64;
    }
    Ok(true)
}

/// A record mark with a plausible length: a frame if its checksum holds.
#[derive(Clone, Copy)]
struct Candidate {
    start: u64,
    end: u64,
    len_bytes: [u8; 4],
    stored: u32,
}

/// The next candidate frame starting at or after `*from`; advances `*from` past it.
fn next_candidate<R: ReadAt + ?Sized>(
    window: &mut Window<'_, R>,
    from: &mut u64,
) -> io::Result<Option<Candidate>> {
    let file_len = window.file_len;
    while file_len.saturating_sub(*from) >= FRAME_OVERHEAD {
        let chunk = (file_len - *from).min(64 * 1024) as usize;
        let hit = window
            .get(*from, chunk)?
            .iter()
            .position(|&b| b == RECORD_MARK[0]);
        let Some(i) = hit else {
            *from += chunk as u64;
            continue;
        };
        let start = *from + i as u64;
        *from = start + 1;
        if file_len - start < FRAME_OVERHEAD {
            return Ok(None);
        }
        let head = window.get(start, FRAME_OVERHEAD as usize)?;
        if head[..4] != RECORD_MARK {
            continue;
        }
        let len_bytes = [head[4], head[5], head[6], head[7]];
        let stored = u32::from_le_bytes([head[8], head[9], head[10], head[11]]);
        let len = u32::from_le_bytes(len_bytes);
        let end = start + FRAME_OVERHEAD + len as u64;
        if len <= MAX_PAYLOAD && end <= file_len {
            return Ok(Some(Candidate {
                start,
                end,
                len_bytes,
                stored,
            }));
        }
    }
    Ok(None)
}

/// Every intact frame starting after `after`, as (start, end) in file order, found in one
/// pass: each byte is hashed once, whatever the candidates claim.
///
/// With `Q(k)` the CRC of the bytes from `after` to `k`, the CRC of the bytes from `a` to `e`
/// is `Q(e) ^ shift(Q(a), e - a)` (CRC-32's combine rule), so a candidate's frame checksum
/// follows from the running CRC at its payload's start and end.
fn intact_frames_after<R: ReadAt + ?Sized>(source: &R, after: u64) -> io::Result<Vec<(u64, u64)>> {
    use std::cmp::Reverse;
    let mut marks = Window::new(source)?;
    let mut bytes = Window::new(source)?;
    let mut search_from = after + 1;
    let mut upcoming = next_candidate(&mut marks, &mut search_from)?;
    // (payload end, frame start, the running CRC the payload end must show)
    let mut awaiting: std::collections::BinaryHeap<Reverse<(u64, u64, u32)>> = Default::default();
    let mut running = crc32fast::Hasher::new();
    let mut hashed = after;
    let mut found = Vec::new();
    loop {
        let payload_start = upcoming.map(|c| c.start + FRAME_OVERHEAD);
        let payload_end = awaiting.peek().map(|Reverse((end, _, _))| *end);
        let Some(at) = payload_start.into_iter().chain(payload_end).min() else {
            break;
        };
        while hashed < at {
            let n = (at - hashed).min(WINDOW as u64) as usize;
            running.update(bytes.get(hashed, n)?);
            hashed += n as u64;
        }
        let q = running.clone().finalize();
        if let Some(c) = upcoming.filter(|c| c.start + FRAME_OVERHEAD == at) {
            let len = (c.end - at) as u32;
            let expected = c.stored ^ crc_shift(crc32fast::hash(&c.len_bytes) ^ q, len);
            awaiting.push(Reverse((c.end, c.start, expected)));
            upcoming = next_candidate(&mut marks, &mut search_from)?;
        }
        while let Some(&Reverse((end, start, expected))) = awaiting.peek() {
            if end != at {
                break;
            }
            awaiting.pop();
            if q == expected {
                found.push((start, end));
            }
        }
    }
    found.sort_unstable();
    Ok(found)
}

/// The reflected CRC-32 polynomial (IEEE 802.3), as crc32fast uses it.
const CRC_POLY: u32 = 0xEDB8_8320;

/// `a(x) * b(x) mod p(x)` in the reflected bit order of CRC-32 (bit 31 is x^0).
fn crc_mul(a: u32, mut b: u32) -> u32 {
    let mut product = 0;
    let mut bit = 1u32 << 31;
    while bit != 0 {
        if a & bit != 0 {
            product ^= b;
        }
        bit >>= 1;
        b = if b & 1 != 0 {
            (b >> 1) ^ CRC_POLY
        } else {
            b >> 1
        };
    }
    product
}

/// `x^(8n) mod p(x)` for n up to [`MAX_PAYLOAD`], as two 1025-entry tables (n = 1024 h + l),
/// so a shift costs two multiplications instead of twenty.
fn crc_powers() -> &'static ([u32; 1025], [u32; 1025]) {
    static POWERS: std::sync::OnceLock<([u32; 1025], [u32; 1025])> = std::sync::OnceLock::new();
    POWERS.get_or_init(|| {
        let x_to_8 = 1u32 << (31 - 8);
        let mut low = [1u32 << 31; 1025];
        for n in 1..low.len() {
            low[n] = crc_mul(low[n - 1], x_to_8);
        }
        let mut high = [1u32 << 31; 1025];
        for n in 1..high.len() {
            high[n] = crc_mul(high[n - 1], low[1024]);
        }
        (low, high)
    })
}

/// The CRC of `A` followed by `len` bytes equals `crc_shift(crc(A), len) ^ crc(those bytes)`.
fn crc_shift(crc: u32, len: u32) -> u32 {
    let (low, high) = crc_powers();
    let power = crc_mul(high[(len >> 10) as usize], low[(len & 1023) as usize]);
    crc_mul(power, crc)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Builds a file from a compact recipe: `H` a valid header, `r<text>` a frame holding
    /// `<text>`, `x<n>` n garbage bytes (0xAA), `z<n>` n zeros, `t<n>` the first n bytes of a
    /// frame for "torn".
    /// Words are separated by spaces.
    fn build(recipe: &str) -> Vec<u8> {
        let mut out = Vec::new();
        for word in recipe.split_whitespace() {
            let (tag, rest) = word.split_at(1);
            match tag {
                "H" => out.extend_from_slice(&header()),
                "r" => encode(rest.as_bytes(), &mut out).unwrap(),
                "x" => out.extend(std::iter::repeat_n(0xAA, rest.parse().unwrap())),
                "z" => out.extend(std::iter::repeat_n(0, rest.parse().unwrap())),
                "t" => {
                    let mut frame = Vec::new();
                    encode(b"torn", &mut frame).unwrap();
                    out.extend_from_slice(&frame[..rest.parse().unwrap()]);
                }
                _ => panic!("bad recipe word {word}"),
            }
        }
        out
    }

    /// Scans `bytes` and describes the result as `records | damaged | tail | end`, for example
    /// `a,b | 28+5 | - | 60`.
    fn describe(bytes: &[u8]) -> String {
        let mut records = Vec::new();
        let outcome = scan(bytes, |_, payload| {
            records.push(String::from_utf8_lossy(payload).into_owned())
        })
        .unwrap();
        let damaged: Vec<String> = outcome
            .damaged
            .iter()
            .map(|s| format!("{}+{}", s.offset, s.len))
            .collect();
        let tail = outcome
            .torn_tail
            .map_or("-".to_string(), |s| format!("{}+{}", s.offset, s.len));
        format!(
            "{} | {} | {} | {}",
            records.join(","),
            if damaged.is_empty() {
                "-".into()
            } else {
                damaged.join(",")
            },
            tail,
            outcome.end
        )
    }

    fn check(recipe: &str, expected: &str) {
        assert_eq!(describe(&build(recipe)), expected, "recipe: {recipe}");
    }

    #[test]
    fn scan_cases() {
        // Frame of "a" is 13 bytes, of "bb" 14; header is 16.
        check("H", " | - | - | 16");
        check("H ra", "a | - | - | 29");
        check("H ra rbb", "a,bb | - | - | 43");
        check("H ra t5", "a | - | 29+5 | 29");
        check("H ra t15", "a | - | 29+15 | 29");
        check("H ra t4", "a | - | 29+4 | 29");
        check("H ra t2", "a | - | 29+2 | 29");
        check("H ra z9", "a | - | 29+9 | 29");
        // Bytes no interrupted write leaves are damage, kept: appends go after them.
        check("H ra x3", "a | 29+3 | - | 32");
        check("H x7 ra", "a | 16+7 | - | 36");
        check("H ra x40 rbb x2 rc", "a,bb,c | 29+40,83+2 | - | 98");
        check("H ra t10 rbb", "a,bb | 29+10 | - | 53");
        check("H x100", " | 16+100 | - | 116");
    }

    #[test]
    fn flipped_bytes_anywhere_in_a_middle_frame_keep_its_neighbours() {
        let file = build("H ra rmiddle rc");
        let middle = 29..29 + 12 + 6;
        for at in middle {
            let mut damaged = file.clone();
            damaged[at] ^= 0x01;
            let described = describe(&damaged);
            assert!(
                described.starts_with("a,c | 29+18 | - |"),
                "byte {at}: {described}"
            );
        }
    }

    #[test]
    fn a_huge_length_field_is_damage_not_a_record() {
        let mut file = build("H ra rbb");
        let length_of_a = 16 + 4;
        file[length_of_a..length_of_a + 4].copy_from_slice(&u32::MAX.to_le_bytes());
        assert_eq!(describe(&file), "bb | 16+13 | - | 43");
    }

    #[test]
    fn frames_split_across_window_reads_are_found() {
        let big = "z".repeat(WINDOW - 20);
        let mut file = build("H");
        for text in ["a", big.as_str(), "bb", big.as_str(), "c"] {
            encode(text.as_bytes(), &mut file).unwrap();
        }
        let mut count = 0;
        let outcome = scan(file.as_slice(), |_, _| count += 1).unwrap();
        assert_eq!(count, 5);
        assert_eq!(outcome.end, file.len() as u64);
    }

    proptest::proptest! {
        /// Whatever single byte is damaged, every other record is still found, and the damage
        /// is reported where it is — in the last record too, which is never taken for an
        /// interrupted write and cut.
        #[test]
        fn one_flipped_byte_costs_at_most_its_own_record(
            payloads in proptest::collection::vec("[ -~]{0,40}", 1..12),
            position in 0.0f64..1.0,
            flip in 1u8..=255,
        ) {
            let mut file = header().to_vec();
            let mut frames = Vec::new();
            for p in &payloads {
                let start = file.len();
                encode(p.as_bytes(), &mut file).unwrap();
                frames.push(start..file.len());
            }
            let body = file.len() - HEADER_LEN as usize;
            let at = HEADER_LEN as usize + ((position * body as f64) as usize).min(body - 1);
            file[at] ^= flip;
            let hit = frames.iter().position(|f| f.contains(&at)).unwrap();
            let mut found = Vec::new();
            let outcome = scan(file.as_slice(), |_, p| found.push(p.to_vec())).unwrap();
            let expected: Vec<Vec<u8>> = payloads
                .iter()
                .enumerate()
                .filter(|(i, _)| *i != hit)
                .map(|(_, p)| p.as_bytes().to_vec())
                .collect();
            proptest::prop_assert_eq!(found, expected);
            let bad = Span { offset: frames[hit].start as u64, len: frames[hit].len() as u64 };
            proptest::prop_assert_eq!(outcome.damaged, vec![bad]);
            proptest::prop_assert_eq!(outcome.torn_tail, None);
            proptest::prop_assert_eq!(outcome.end, file.len() as u64);
        }

        /// A file cut anywhere keeps every complete record and reports the rest as torn.
        #[test]
        fn a_cut_anywhere_keeps_every_complete_record(
            payloads in proptest::collection::vec("[ -~]{0,40}", 1..12),
            position in 0.0f64..=1.0,
        ) {
            let mut file = header().to_vec();
            let mut ends = Vec::new();
            for p in &payloads {
                encode(p.as_bytes(), &mut file).unwrap();
                ends.push(file.len());
            }
            let body = file.len() - HEADER_LEN as usize;
            let cut = HEADER_LEN as usize + (position * body as f64) as usize;
            let mut count = 0;
            let outcome = scan(&file[..cut], |_, _| count += 1).unwrap();
            let complete = ends.iter().filter(|&&e| e <= cut).count();
            proptest::prop_assert_eq!(count, complete);
            let last_end = ends.iter().copied().filter(|&e| e <= cut).max().unwrap_or(HEADER_LEN as usize);
            proptest::prop_assert_eq!(outcome.end, last_end as u64);
            let torn = (cut > last_end).then(|| Span { offset: last_end as u64, len: (cut - last_end) as u64 });
            proptest::prop_assert_eq!(outcome.torn_tail, torn);
        }
    }

    #[test]
    fn oversize_payload_is_refused() {
        let mut out = Vec::new();
        let big = vec![b'a'; MAX_PAYLOAD as usize + 1];
        assert_eq!(encode(&big, &mut out), Err(big.len()));
        assert!(out.is_empty());
    }

    #[test]
    fn header_cases() {
        let good = header();
        assert_eq!(check_header(&good), HeaderCheck::Valid);
        assert_eq!(check_header(&[]), HeaderCheck::Empty);
        assert_eq!(check_header(&good[..5]), HeaderCheck::Truncated);
        assert!(matches!(
            check_header(b"PK\x03\x04"),
            HeaderCheck::NotALog(_)
        ));
        assert!(matches!(
            check_header(b"not a log file, some text"),
            HeaderCheck::NotALog(_)
        ));
        let mut future = good;
        future[8..10].copy_from_slice(&7u16.to_le_bytes());
        let crc = crc32fast::hash(&future[..12]);
        future[12..].copy_from_slice(&crc.to_le_bytes());
        assert_eq!(check_header(&future), HeaderCheck::Future(7));
        // One flipped bit anywhere after the magic is damage, never a newer format
        // (bit 6 of byte 9 made version 1 read as 16385).
        for byte in 8..16 {
            for bit in 0..8 {
                let mut flipped = good;
                flipped[byte] ^= 1 << bit;
                assert_eq!(check_header(&flipped), HeaderCheck::Damaged, "{byte}.{bit}");
            }
        }
    }

    #[test]
    fn crc_shift_follows_the_combine_rule() {
        let data: Vec<u8> = (0..5000u32).map(|n| (n * 7 + n / 13) as u8).collect();
        for split in [0, 1, 7, 1023, 1024, 1025, 4999, 5000] {
            let (a, b) = data.split_at(split);
            let combined = crc_shift(crc32fast::hash(a), b.len() as u32) ^ crc32fast::hash(b);
            assert_eq!(combined, crc32fast::hash(&data), "split at {split}");
        }
        // Lengths up to a whole payload use both tables.
        let big = vec![0x5Au8; MAX_PAYLOAD as usize];
        let whole = [&b"head"[..], &big].concat();
        assert_eq!(
            crc_shift(crc32fast::hash(b"head"), MAX_PAYLOAD) ^ crc32fast::hash(&big),
            crc32fast::hash(&whole)
        );
    }

    /// Reads through to a byte slice and fails once more than `budget` bytes were read.
    struct Budget<'a> {
        bytes: &'a [u8],
        read: std::cell::Cell<u64>,
        budget: u64,
    }

    impl ReadAt for Budget<'_> {
        fn byte_len(&self) -> io::Result<u64> {
            Ok(self.bytes.len() as u64)
        }

        fn read_exact_at(&self, offset: u64, buf: &mut [u8]) -> io::Result<()> {
            self.read.set(self.read.get() + buf.len() as u64);
            if self.read.get() > self.budget {
                return Err(io::Error::other(
                    "read budget exceeded: the scan is not linear",
                ));
            }
            self.bytes.read_exact_at(offset, buf)
        }
    }

    /// A file whose every 12 bytes are a record mark claiming almost a megabyte.
    fn crafted(total: usize) -> Vec<u8> {
        let mut file = build("H ra");
        let mut n = 0u32;
        while file.len() + 12 < total {
            file.extend_from_slice(&RECORD_MARK);
            file.extend_from_slice(&(MAX_PAYLOAD - n % 4096).to_le_bytes());
            file.extend_from_slice(&n.to_le_bytes());
            n += 1;
        }
        encode(b"after", &mut file).unwrap();
        file
    }

    #[test]
    fn a_crafted_file_costs_linear_reads() {
        let file = crafted(3 << 20);
        let source = Budget {
            bytes: &file,
            read: std::cell::Cell::new(0),
            budget: 6 * file.len() as u64,
        };
        let mut found = Vec::new();
        let outcome = scan(&source, |_, p| found.push(p.to_vec())).unwrap();
        assert_eq!(found, [b"a".to_vec(), b"after".to_vec()]);
        assert_eq!(outcome.damaged.len(), 1);
        assert_eq!(outcome.damaged[0].offset, 29);
        assert_eq!(outcome.torn_tail, None);
        println!(
            "read {} bytes for a file of {}",
            source.read.get(),
            file.len()
        );
    }
}

//! On-disk framing of the dose log: a file header, length-and-checksum frames, and the
//! recovery scan that finds every intact frame.
//!
//! Layout: a 16-byte header (8-byte magic, format version, flags, CRC-32 of the first 12
//! bytes), then frames: a 4-byte record mark, the payload length and a CRC-32 over the length
//! and the payload. The payload is opaque here (see `record.rs`).
//!
//! Design choice: the record mark starts with byte 0xF7, which never occurs in UTF-8 text, so
//! after damage in the middle of the file the scan can resynchronise on the next mark and keep
//! every intact record after the damage instead of truncating it away. Only a bad region with
//! no intact frame after it is a torn tail. The scan reads through a sliding window rather
//! than loading the whole file, so opening a large log does not double its memory.

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
    /// Not our magic, or our magic with a damaged header; the reason says which.
    NotALog(&'static str),
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
    let version = u16::from_le_bytes([bytes[8], bytes[9]]);
    if version > FORMAT_VERSION {
        return HeaderCheck::Future(version);
    }
    let stored = u32::from_le_bytes([bytes[12], bytes[13], bytes[14], bytes[15]]);
    if version == 0 || crc32fast::hash(&bytes[..12]) != stored {
        return HeaderCheck::NotALog("the log header is damaged");
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

    /// The offset of the next intact frame after `offset`, without reporting its payload.
    fn next_intact(&mut self, offset: u64) -> io::Result<Option<u64>> {
        let mut candidate = offset + 1;
        while self.file_len - candidate >= FRAME_OVERHEAD {
            if self.get(candidate, 1)?[0] == RECORD_MARK[0]
                && self.frame(candidate, &mut |_, _| {})?.is_some()
            {
                return Ok(Some(candidate));
            }
            candidate += 1;
        }
        Ok(None)
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
    let mut offset = HEADER_LEN;
    while offset < file_len {
        if let Some(end) = window.frame(offset, &mut on_record)? {
            offset = end;
            outcome.end = end;
            continue;
        }
        match window.next_intact(offset)? {
            Some(next) => {
                outcome.damaged.push(Span {
                    offset,
                    len: next - offset,
                });
                offset = next;
            }
            None => {
                outcome.torn_tail = Some(Span {
                    offset,
                    len: file_len - offset,
                });
                break;
            }
        }
    }
    Ok(outcome)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Builds a file from a compact recipe: `H` a valid header, `r<text>` a frame holding
    /// `<text>`, `x<n>` n garbage bytes (0xAA), `t<n>` the first n bytes of a frame for "torn".
    /// Words are separated by spaces.
    fn build(recipe: &str) -> Vec<u8> {
        let mut out = Vec::new();
        for word in recipe.split_whitespace() {
            let (tag, rest) = word.split_at(1);
            match tag {
                "H" => out.extend_from_slice(&header()),
                "r" => encode(rest.as_bytes(), &mut out).unwrap(),
                "x" => out.extend(std::iter::repeat_n(0xAA, rest.parse().unwrap())),
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
        check("H ra x3", "a | - | 29+3 | 29");
        check("H x7 ra", "a | 16+7 | - | 36");
        check("H ra x40 rbb x2 rc", "a,bb,c | 29+40,83+2 | - | 98");
        check("H ra t10 rbb", "a,bb | 29+10 | - | 53");
        check("H x100", " | - | 16+100 | 16");
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
        /// is reported where it is: as a torn tail only when nothing intact follows it.
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
            if hit == frames.len() - 1 {
                proptest::prop_assert_eq!(outcome.torn_tail, Some(bad));
                proptest::prop_assert!(outcome.damaged.is_empty());
            } else {
                proptest::prop_assert_eq!(outcome.damaged, vec![bad]);
                proptest::prop_assert_eq!(outcome.torn_tail, None);
            }
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
        assert_eq!(check_header(&future), HeaderCheck::Future(7));
        let mut flipped = good;
        flipped[11] ^= 0x40;
        assert_eq!(
            check_header(&flipped),
            HeaderCheck::NotALog("the log header is damaged")
        );
    }
}

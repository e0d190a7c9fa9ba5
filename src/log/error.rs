//! The dose log's one error type.
//!
//! Same shape as the engine's error: [`Error`] is opaque, callers match on the
//! `#[non_exhaustive]` [`ErrorKind`] and read named parameters. The kinds are chosen by what
//! the caller can do next: `StorageFull` and `ReadOnly` mean "the entry is kept pending, tell
//! the operator it is not saved and retry later", `Locked` means "another copy of the app has
//! this log open", `NotALog` and `FutureVersion` mean "leave this file alone" (a `NotALog`
//! with the `reason` parameter `damaged-header` can be salvaged), `FileReplaced` means "this
//! writer's file is gone: reopen".

use std::fmt;
use std::io;

/// What went wrong with the log, as a category the UI and the CLI can act on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The disk or quota is full; the entry stays pending in memory.
    StorageFull,
    /// The storage refuses writes (read-only medium, permissions); the entry stays pending.
    ReadOnly,
    /// Another process (a second copy of the app) holds the log's exclusive lock.
    Locked,
    /// The file is not a dose log, or its header is damaged; it is left untouched.
    NotALog,
    /// The file was written by a newer version of the app; it is left untouched.
    FutureVersion,
    /// An entry given by the user or another device is incomplete or not valid.
    InvalidEntry,
    /// A correction or void refers to an id that is not in the log.
    UnknownReference,
    /// A record is too large to frame.
    TooLarge,
    /// A log was asked to import itself.
    SameLog,
    /// The log file was deleted or replaced while a writer had it open; that writer
    /// acknowledges nothing more (the entry stays pending) until the log is opened again.
    FileReplaced,
    /// Any other input/output failure.
    Io,
}

impl ErrorKind {
    /// A stable, kebab-case code: the JSON `kind` and the key stem for translations.
    pub fn code(self) -> &'static str {
        match self {
            ErrorKind::StorageFull => "storage-full",
            ErrorKind::ReadOnly => "read-only",
            ErrorKind::Locked => "locked",
            ErrorKind::NotALog => "not-a-log",
            ErrorKind::FutureVersion => "future-version",
            ErrorKind::InvalidEntry => "invalid-entry",
            ErrorKind::UnknownReference => "unknown-reference",
            ErrorKind::TooLarge => "too-large",
            ErrorKind::SameLog => "same-log",
            ErrorKind::FileReplaced => "file-replaced",
            ErrorKind::Io => "io",
        }
    }
}

/// A log failure: a kind, an English message and named parameters.
#[derive(Clone, Debug, PartialEq)]
pub struct Error {
    kind: ErrorKind,
    message: String,
    params: Vec<(&'static str, String)>,
}

impl Error {
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> Error {
        Error {
            kind,
            message: message.into(),
            params: Vec::new(),
        }
    }

    /// Adds a named parameter for translated messages.
    pub fn with(mut self, name: &'static str, value: impl ToString) -> Error {
        self.params.push((name, value.to_string()));
        self
    }

    /// Classifies an I/O failure so the UI can say "disk full" or "storage is read-only"
    /// rather than a raw OS message; `doing` says what the log was attempting.
    pub fn io(doing: &str, path: &std::path::Path, e: &io::Error) -> Error {
        let kind = match e.kind() {
            io::ErrorKind::StorageFull | io::ErrorKind::QuotaExceeded => ErrorKind::StorageFull,
            io::ErrorKind::ReadOnlyFilesystem | io::ErrorKind::PermissionDenied => {
                ErrorKind::ReadOnly
            }
            _ => ErrorKind::Io,
        };
        let what = match kind {
            ErrorKind::StorageFull => "the storage is full",
            ErrorKind::ReadOnly => "the storage is read-only",
            _ => "input/output error",
        };
        Error::new(kind, format!("{doing} {}: {what} ({e})", path.display()))
            .with("path", path.display())
    }

    pub fn kind(&self) -> ErrorKind {
        self.kind
    }

    pub fn message(&self) -> &str {
        &self.message
    }

    pub fn params(&self) -> &[(&'static str, String)] {
        &self.params
    }

    pub fn param(&self, name: &str) -> Option<&str> {
        self.params
            .iter()
            .find(|(n, _)| *n == name)
            .map(|(_, v)| v.as_str())
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Error {}

pub type Result<T> = std::result::Result<T, Error>;

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::Path;

    #[test]
    fn io_errors_are_classified_for_the_operator() {
        let path = Path::new("/x/site.log");
        let cases = [
            (io::ErrorKind::StorageFull, ErrorKind::StorageFull, "full"),
            (
                io::ErrorKind::ReadOnlyFilesystem,
                ErrorKind::ReadOnly,
                "read-only",
            ),
            (
                io::ErrorKind::PermissionDenied,
                ErrorKind::ReadOnly,
                "read-only",
            ),
            (io::ErrorKind::UnexpectedEof, ErrorKind::Io, "input/output"),
        ];
        for (io_kind, expected, words) in cases {
            let e = Error::io("writing", path, &io::Error::from(io_kind));
            assert_eq!(e.kind(), expected, "{io_kind:?}");
            assert!(e.message().contains(words), "{}", e.message());
            assert_eq!(e.param("path"), Some("/x/site.log"));
        }
    }
}

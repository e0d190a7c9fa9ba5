//! Whole-file writes for the app's own small files (settings, site profiles, calculator inputs,
//! the font cache): the one way the app replaces a file that is not the dose log.
//!
//! Design choice: the new content goes to a temporary file beside the old one, is flushed to
//! storage, and is renamed over it; a crash or a full disk leaves the old file or the new one,
//! never half of either. The dose log has its own, stronger, append-only format (`crate::log`).

use std::fs::File;
use std::io::{self, Write};
use std::path::Path;

/// Replaces `path` with `bytes` whole: temporary file, `sync_all`, rename. The temporary file
/// is removed when any step fails.
pub fn write_whole(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let name = path
        .file_name()
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "no file name"))?;
    let mut tmp_name = name.to_os_string();
    tmp_name.push(".tmp");
    let tmp = path.with_file_name(tmp_name);
    let written = (|| {
        let mut file = File::create(&tmp)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if written.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    written
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dir(name: &str) -> std::path::PathBuf {
        let d = std::env::temp_dir().join(format!("molefeed-files-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn a_whole_write_replaces_the_file_and_leaves_no_temporary_one() {
        let d = dir("replace");
        let path = d.join("settings.json");
        std::fs::write(&path, "old").unwrap();
        write_whole(&path, b"new").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "new");
        let names: Vec<_> = std::fs::read_dir(&d)
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, [std::ffi::OsString::from("settings.json")]);
    }

    #[test]
    fn a_failed_write_keeps_the_old_file_and_reports_the_error() {
        let d = dir("fail");
        let path = d.join("sites.json");
        std::fs::write(&path, "old").unwrap();
        // A directory where the temporary file should go makes the write fail midway.
        std::fs::create_dir_all(d.join("sites.json.tmp").join("x")).unwrap();
        assert!(write_whole(&path, b"new").is_err());
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
    }
}

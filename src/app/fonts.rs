//! Makes sure fontconfig can find at least one font: the app's own.
//!
//! Slint draws every label with the DejaVu Sans files compiled into the binary
//! (`ui/app.slint`), but on Linux its font library still asks fontconfig for a fallback
//! family at start-up, and panics when fontconfig knows no font at all (a kiosk image, a
//! minimal container, a tablet build without font packages). So before Slint starts, the
//! desktop entry copies the bundled regular face into the cache directory and points
//! `FONTCONFIG_FILE` at a small configuration that first includes whatever configuration was
//! in force (the user's `FONTCONFIG_FILE`, else the system's) and then adds that folder.
//! System fonts stay visible where there are any; where there are none, ours is found.
//!
//! Design choice: a file copy and an environment variable rather than a patched font
//! library: both are undone by deleting the cache folder, and the UI tests run through the
//! same path with an empty configuration, so the "no system fonts" case is exercised on every
//! test run. The copy is a cache, not user data: the dose log remains the only writer of
//! that.

use std::io;
use std::path::{Path, PathBuf};

/// The regular face `ui/app.slint` imports; one face is enough for fontconfig to answer.
pub const BUNDLED_FONT: (&str, &[u8]) = (
    "DejaVuSans.ttf",
    include_bytes!("../../ui/fonts/DejaVuSans.ttf"),
);

/// The configuration fontconfig reads when nothing else is set.
pub const SYSTEM_CONFIG: &str = "/etc/fonts/fonts.conf";

/// A fontconfig configuration that keeps `base` (missing is fine) and adds `font_dir`.
pub fn config_text(base: &Path, font_dir: &Path, cache_dir: &Path) -> String {
    format!(
        r#"<?xml version="1.0"?>
<!DOCTYPE fontconfig SYSTEM "urn:fontconfig:fonts.dtd">
<!-- Written by Molefeed at start-up so that at least its own font is always found. -->
<fontconfig>
  <include ignore_missing="yes">{}</include>
  <dir>{}</dir>
  <cachedir>{}</cachedir>
</fontconfig>
"#,
        xml_text(&base.to_string_lossy()),
        xml_text(&font_dir.to_string_lossy()),
        xml_text(&cache_dir.to_string_lossy()),
    )
}

fn xml_text(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// Writes the bundled font and a configuration that adds it into `folder`, and returns the
/// configuration's path. `base` is the configuration to keep (see [`base_config`]). Files
/// already holding the same bytes are left alone, so a normal start writes nothing.
pub fn prepare(folder: &Path, base: &Path) -> io::Result<PathBuf> {
    let font_dir = folder.join("fonts");
    std::fs::create_dir_all(&font_dir)?;
    let (name, bytes) = BUNDLED_FONT;
    write_if_changed(&font_dir.join(name), bytes)?;
    let conf = folder.join("fonts.conf");
    let text = config_text(base, &font_dir, &folder.join("fontconfig-cache"));
    write_if_changed(&conf, text.as_bytes())?;
    Ok(conf)
}

/// The configuration in force before the app changes anything: `FONTCONFIG_FILE` if it is
/// set (and is not the app's own from an earlier start), else the system's.
pub fn base_config(current: Option<&str>, own: &Path) -> PathBuf {
    match current {
        Some(path) if !path.is_empty() && Path::new(path) != own => PathBuf::from(path),
        _ => PathBuf::from(SYSTEM_CONFIG),
    }
}

/// Prepares the folder and points `FONTCONFIG_FILE` at it. Call before Slint starts and
/// before any other thread exists; failures leave fontconfig as it was (the app then starts
/// as it would have without this).
pub fn use_bundled_font_as_fallback(folder: &Path) -> io::Result<()> {
    let own = folder.join("fonts.conf");
    let current = std::env::var("FONTCONFIG_FILE").ok();
    let conf = prepare(folder, &base_config(current.as_deref(), &own))?;
    // SAFETY: the callers (the desktop entry, test set-up) run this on the main thread before
    // Slint, fontconfig or any other thread that could read the environment has started.
    unsafe { std::env::set_var("FONTCONFIG_FILE", conf) };
    Ok(())
}

fn write_if_changed(path: &Path, bytes: &[u8]) -> io::Result<()> {
    if std::fs::read(path).is_ok_and(|old| old == bytes) {
        return Ok(());
    }
    // Written aside and renamed, so a start interrupted mid-write never leaves a torn font.
    super::files::write_whole(path, bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_configuration_keeps_the_old_one_and_adds_the_font_folder() {
        let text = config_text(
            Path::new("/etc/fonts/fonts.conf"),
            Path::new("/home/op/.cache/molefeed/fonts"),
            Path::new("/home/op/.cache/molefeed/fontconfig-cache"),
        );
        let include = text.find("<include ignore_missing=\"yes\">/etc/fonts/fonts.conf</include>");
        let dir = text.find("<dir>/home/op/.cache/molefeed/fonts</dir>");
        assert!(include.is_some() && dir.is_some(), "{text}");
        assert!(include < dir, "the old configuration comes first: {text}");
        assert!(
            config_text(Path::new("a&b"), Path::new("<x>"), Path::new("c")).contains("a&amp;b")
        );
    }

    #[test]
    fn the_base_is_the_users_setting_unless_it_is_our_own() {
        let own = Path::new("/cache/fonts.conf");
        for (current, expected) in [
            (None, SYSTEM_CONFIG),
            (Some(""), SYSTEM_CONFIG),
            (Some("/cache/fonts.conf"), SYSTEM_CONFIG),
            (Some("/opt/kiosk/fonts.conf"), "/opt/kiosk/fonts.conf"),
        ] {
            assert_eq!(
                base_config(current, own),
                PathBuf::from(expected),
                "{current:?}"
            );
        }
    }

    #[test]
    fn preparing_writes_the_font_once_and_leaves_it_alone_after() {
        let folder = std::env::temp_dir().join(format!("molefeed-fonts-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&folder);
        let conf = prepare(&folder, Path::new(SYSTEM_CONFIG)).unwrap();
        let font = folder.join("fonts").join(BUNDLED_FONT.0);
        assert_eq!(std::fs::read(&font).unwrap(), BUNDLED_FONT.1);
        assert!(std::fs::read_to_string(&conf).unwrap().contains("<dir>"));
        let written = std::fs::metadata(&font).unwrap().modified().unwrap();
        prepare(&folder, Path::new(SYSTEM_CONFIG)).unwrap();
        assert_eq!(
            std::fs::metadata(&font).unwrap().modified().unwrap(),
            written
        );
        // A damaged copy (a full disk on an earlier start) is replaced.
        std::fs::write(&font, b"torn").unwrap();
        prepare(&folder, Path::new(SYSTEM_CONFIG)).unwrap();
        assert_eq!(std::fs::read(&font).unwrap(), BUNDLED_FONT.1);
        std::fs::remove_dir_all(&folder).unwrap();
    }
}

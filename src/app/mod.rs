//! The app layer: controllers in plain Rust, and (with the `app` feature) the Slint UI.
//!
//! Design choice: as in Slint's todo-mvc example, each view exports a global adapter of
//! properties and callbacks; one Rust controller per screen ([`calc_screen`] around [`calc`],
//! [`log_screen`], [`site_editor`], [`plots`]) over a shared [`session`] owns the behaviour and
//! knows nothing of Slint, [`state`] holds them and navigation, and one bridge copies their
//! finished view models into the adapters. The app is a library
//! with one entry, [`run`], so desktop (`molefeed` with no arguments) and Android share it;
//! each platform injects its data directory. The engine and the log are reached only through
//! the seams in [`seams`] and [`dose_log`].

pub mod calc;
pub mod calc_screen;
pub mod dose_log;
pub mod engine_adapter;
pub mod files;
pub mod keys;
pub mod log_screen;
pub mod numbers;
pub mod path_screen;
pub mod plot;
pub mod plots;
pub mod seams;
pub mod session;
pub mod site_editor;
pub mod sites;
pub mod state;
pub mod stock_screen;
pub mod stock_view;
pub mod words;

#[cfg(feature = "app")]
mod bridge;
#[cfg(feature = "app")]
pub mod fonts;
#[cfg(feature = "app")]
pub mod i18n;

/// The generated Slint types (`AppWindow` and the adapter globals).
#[cfg(feature = "app")]
pub mod ui {
    slint::include_modules!();
}

#[cfg(feature = "app")]
pub use bridge::{AppHandle, Deps, attach};

use std::path::PathBuf;

/// How a platform starts the app.
#[derive(Clone, Debug, Default)]
pub struct RunOptions {
    /// Where settings (and later the log) are stored. `None`: nothing is written.
    pub data_dir: Option<PathBuf>,
    /// Force a language (otherwise the saved setting, else the system locale, else English).
    pub lang: Option<numbers::Lang>,
    /// Whether "back" on the first screen closes the app (Android's back key does).
    pub quit_on_root_back: bool,
}

impl RunOptions {
    /// Desktop defaults: the per-user data directory and the locale from the environment.
    pub fn desktop() -> RunOptions {
        // The same per-user directory the dose log uses (its files go in `logs/` inside).
        let data_dir =
            directories::ProjectDirs::from("", "", "Molefeed").map(|d| d.data_dir().to_path_buf());
        let lang = ["LC_ALL", "LC_MESSAGES", "LANG"]
            .iter()
            .filter_map(|v| std::env::var(v).ok())
            .find(|v| !v.is_empty())
            .and_then(|v| numbers::Lang::from_tag(&v));
        RunOptions {
            data_dir,
            lang,
            quit_on_root_back: false,
        }
    }
}

/// Desktop start-up before the window: makes the bundled font visible to fontconfig where
/// the platform uses it (see [`fonts`]). A failure is reported and the app starts anyway.
#[cfg(feature = "app")]
pub fn prepare_desktop_fonts() {
    #[cfg(all(unix, not(target_os = "android"), not(target_vendor = "apple")))]
    if let Some(dirs) = directories::ProjectDirs::from("", "", "Molefeed")
        && let Err(e) = fonts::use_bundled_font_as_fallback(dirs.cache_dir())
    {
        eprintln!("molefeed: could not prepare the fallback font: {e}");
    }
}

/// Opens the app window and runs until it is closed. Desktop `molefeed` and the Android entry
/// both call this.
#[cfg(feature = "app")]
pub fn run(options: RunOptions) -> Result<(), slint::PlatformError> {
    use slint::ComponentHandle;
    let window = ui::AppWindow::new()?;
    let _handle = attach(&window, Deps::from_options(&options));
    if std::env::var_os("MOLEFEED_QUIT_AFTER_FIRST_FRAME").is_some() {
        quit_after_first_frame(&window)?;
    }
    window.run()
}

/// For the start-up measurement (`tools/measure_app.sh`): report the time from window
/// creation until the event loop is idle after showing the window, and leave the loop, so a
/// script can time a cold start. The software renderer has no frame notifier, so "first
/// frame" is taken as the second turn of the event loop after the window is shown (the first
/// turn handles the initial redraw request).
#[cfg(feature = "app")]
fn quit_after_first_frame(_window: &ui::AppWindow) -> Result<(), slint::PlatformError> {
    let started = std::time::Instant::now();
    slint::Timer::single_shot(std::time::Duration::ZERO, move || {
        let _ = slint::invoke_from_event_loop(move || {
            eprintln!(
                "first frame after {:.1} ms (from window creation)",
                started.elapsed().as_secs_f64() * 1e3
            );
            let _ = slint::quit_event_loop();
        });
    });
    Ok(())
}

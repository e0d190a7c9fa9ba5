//! Cold start to first frame, with the software renderer and the real app: the process starts,
//! opens the persistent dose log in the given data directory (the measurement script puts a
//! 10 000-entry log there), builds the window with the real engine, and renders the first frame
//! of the Start screen into a buffer at tablet size. Prints the time from `main` to the frame
//! and the peak resident memory. Run in release: `tools/measure_app.sh`.
use molefeed::app::numbers::Lang;
use molefeed::app::seams::connected_engine;
use molefeed::app::ui::AppWindow;
use molefeed::app::{Deps, attach, dose_log};
use slint::platform::software_renderer::{MinimalSoftwareWindow, RepaintBufferType};
use slint::platform::{Platform, WindowAdapter};
use slint::{ComponentHandle, PhysicalSize, Rgb8Pixel};
use std::rc::Rc;
use std::time::Instant;

struct Headless(Rc<MinimalSoftwareWindow>);

impl Platform for Headless {
    fn create_window_adapter(&self) -> Result<Rc<dyn WindowAdapter>, slint::PlatformError> {
        Ok(self.0.clone())
    }
}

fn main() {
    let started = Instant::now();
    // As the desktop entry does before its window: the bundled font made visible to fontconfig.
    molefeed::app::prepare_desktop_fonts();
    let data_dir = std::env::args().nth(1).map(std::path::PathBuf::from);
    let window = MinimalSoftwareWindow::new(RepaintBufferType::NewBuffer);
    slint::platform::set_platform(Box::new(Headless(window.clone()))).expect("platform");
    let app = AppWindow::new().expect("window");
    let window_built = started.elapsed();
    let log = dose_log::connected_log(data_dir.as_deref());
    let log_opened = started.elapsed();
    let _handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log,
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    let attached = started.elapsed();
    let (w, h) = (1280u32, 800u32);
    window.set_size(PhysicalSize::new(w, h));
    app.show().expect("show");
    let mut buffer = vec![Rgb8Pixel { r: 0, g: 0, b: 0 }; (w * h) as usize];
    slint::platform::update_timers_and_animations();
    window.draw_if_needed(|renderer| {
        renderer.render(&mut buffer, w as usize);
    });
    let elapsed = started.elapsed();
    let painted = buffer
        .iter()
        .filter(|p| p.r < 90 && p.g < 90 && p.b < 90)
        .count();
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let rss = status
        .lines()
        .find(|l| l.starts_with("VmHWM"))
        .unwrap_or("VmHWM: ?")
        .to_string();
    let ms = |d: std::time::Duration| d.as_secs_f64() * 1e3;
    println!(
        "first frame after {:.1} ms from main ({painted} dark pixels drawn); peak {rss}",
        ms(elapsed)
    );
    println!(
        "  window built {:.1} ms, log opened {:.1} ms, screens filled {:.1} ms, frame drawn {:.1} ms",
        ms(window_built),
        ms(log_opened - window_built),
        ms(attached - log_opened),
        ms(elapsed - attached)
    );
    assert!(painted > 1000, "the first frame is not blank");
}

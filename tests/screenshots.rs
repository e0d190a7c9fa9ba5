//! Headless screenshots: every main screen rendered with Slint's software renderer at phone,
//! tablet and desktop sizes, written to `target/screenshots/` as PNG.
//!
//! Design choice: no display server at all — a `MinimalSoftwareWindow` platform renders into
//! an RGB buffer. Each render must be non-blank and must contain text-like pixels in the
//! content area, so a screen that fails to lay out or loses its font fails the test.

mod common;

use molefeed::app::dose_log::{Amendment, DoseLog, PersistentLog};
use molefeed::app::numbers::Lang;
use molefeed::app::seams::{CalcKind, connected_engine};
use molefeed::app::ui::{AppWindow, CalcAdapter, LogAdapter, Nav, SettingsAdapter};
use molefeed::app::{AppHandle, Deps, attach};
use slint::platform::software_renderer::{MinimalSoftwareWindow, RepaintBufferType};
use slint::platform::{Platform, WindowAdapter};
use slint::{ComponentHandle, PhysicalSize, Rgb8Pixel};
use std::path::PathBuf;
use std::rc::Rc;

struct Headless(Rc<MinimalSoftwareWindow>);

impl Platform for Headless {
    fn create_window_adapter(&self) -> Result<Rc<dyn WindowAdapter>, slint::PlatformError> {
        Ok(self.0.clone())
    }
}

const SCREENS: [&str; 8] = [
    "start",
    "calculators",
    "plots",
    "log",
    "settings",
    "about",
    "path",
    "stock",
];

fn render(window: &MinimalSoftwareWindow, w: u32, h: u32) -> Vec<Rgb8Pixel> {
    window.set_size(PhysicalSize::new(w, h));
    let mut buffer = vec![Rgb8Pixel { r: 0, g: 0, b: 0 }; (w * h) as usize];
    // Two passes: the first lays out lazily created views, the second draws them settled.
    for _ in 0..3 {
        slint::platform::update_timers_and_animations();
        window.request_redraw();
        window.draw_if_needed(|renderer| {
            renderer.render(&mut buffer, w as usize);
        });
    }
    buffer
}

fn save_png(path: &PathBuf, pixels: &[Rgb8Pixel], w: u32, h: u32) {
    let file = std::fs::File::create(path).expect("create png");
    let mut encoder = png::Encoder::new(std::io::BufWriter::new(file), w, h);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder.write_header().expect("png header");
    let bytes: Vec<u8> = pixels.iter().flat_map(|p| [p.r, p.g, p.b]).collect();
    writer.write_image_data(&bytes).expect("png data");
}

/// Pixels dark enough to be text on our light surfaces, inside the content area.
fn dark_pixels(pixels: &[Rgb8Pixel], w: u32, h: u32, compact: bool) -> usize {
    let (x0, y1) = if compact { (0, h - 70) } else { (100, h) };
    let mut n = 0;
    for y in 0..y1 {
        for x in x0..w {
            let p = pixels[(y * w + x) as usize];
            let luma = (p.r as u32 * 299 + p.g as u32 * 587 + p.b as u32 * 114) / 1000;
            if luma < 90 {
                n += 1;
            }
        }
    }
    n
}

fn distinct_colours(pixels: &[Rgb8Pixel]) -> usize {
    let mut seen = std::collections::HashSet::new();
    for p in pixels {
        seen.insert((p.r, p.g, p.b));
    }
    seen.len()
}

fn seeded_log() -> Box<dyn DoseLog> {
    // Operator-entered records (what a person typed into the log), not computed doses.
    let mut log = PersistentLog::scratch();
    for (day, dose) in [(1, 1.6), (2, 1.8), (3, 1.7), (4, 2.1), (5, 1.9)] {
        common::log_typed(
            &mut log,
            &format!("2026-11-0{day}T07:30:00Z"),
            "Harrowmere Tarn Water Works (demo)",
            "Clearwell effluent",
            "NaOCl 12.5 %",
            dose,
        )
        .expect("seed entry");
    }
    // The correction is a whole recomputed result: entry 4 as recomputed at 1.9 mg/L.
    let mut recomputed = log.dose(4).expect("entry 4 read back whole");
    recomputed.operator = "KT".into();
    recomputed.note = "checked against the chart recorder".into();
    recomputed.results[0].value = 1.9;
    recomputed.results[0].shown = "1.9".into();
    // One corrected and one voided entry, so the log screen shows both marks and a history.
    log.correct(
        4,
        Amendment {
            reason: "flow meter read 10 % high".into(),
            dose: recomputed,
        },
    )
    .expect("seed correction");
    log.void(2, "KT", "entered twice").expect("seed void");
    seed_readings(&mut log);
    Box::new(log)
}

/// The demo plant's day tank read yesterday morning and a minute ago (the log takes an
/// earlier time of today or yesterday only, so these follow the clock), a delivery and a
/// chlorine reading: the Stock view has a rate, the Log screen's list has each kind.
fn seed_readings(log: &mut PersistentLog) {
    use molefeed::log::record::Reading;
    let site = "Harrowmere Tarn Water Works (demo)";
    let now = chrono::Local::now().fixed_offset();
    let yesterday = (now.date_naive() - chrono::Duration::days(1))
        .and_hms_opt(6, 0, 0)
        .unwrap()
        .and_local_timezone(*now.offset())
        .unwrap();
    let recent = now - chrono::Duration::minutes(1);
    let level = |level: f64| Reading::TankLevel {
        operator: "KT".into(),
        tank: "hypo-day-tank".into(),
        level,
        unit: "ft".into(),
    };
    for (at, reading) in [
        (yesterday, level(2.4)),
        (recent, level(1.4)),
        (
            recent,
            Reading::Delivery {
                operator: "KT".into(),
                product: "alum-bulk".into(),
                amount: 1200.0,
                unit: "gal".into(),
                note_number: "DN-2231".into(),
            },
        ),
        (
            recent,
            Reading::AtTap {
                operator: "KT".into(),
                tap: "clearwell-tap".into(),
                parameter: "chlorine".into(),
                value: 1.2,
                unit: "mg/L".into(),
            },
        ),
    ] {
        log.record_reading(site, Some(at), reading)
            .expect("seed reading");
    }
}

/// The app on this thread's own software-rendered window, with the real engine and the seeded
/// log, in English.
fn headless_app() -> (Rc<MinimalSoftwareWindow>, AppWindow, AppHandle) {
    common::bundled_fonts_only();
    let window = MinimalSoftwareWindow::new(RepaintBufferType::NewBuffer);
    slint::platform::set_platform(Box::new(Headless(window.clone())))
        .expect("first platform on this thread");
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: seeded_log(),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    (window, app, handle)
}

#[test]
fn every_screen_renders_with_text_at_three_sizes() {
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        // pH adjustment with caustic, for the titration curve on the Plots screen (a product's
        // own numbers are typed with that product chosen).
        st.calc.set_kind(CalcKind::find("ph-adjustment").unwrap());
        for (name, text) in [
            ("flow", "2.4"),
            ("ph", "6.7"),
            ("target-ph", "7.3"),
            ("alkalinity", "38"),
            ("temperature", "58"),
            ("strength", "25"),
            ("specific-gravity", "1.27"),
            ("pump-capacity", "8"),
        ] {
            st.calc.edit(name, text);
        }
        // The feed & pump setting calculator, computed by the real dosing engine (each
        // calculator keeps its own inputs: the flow is typed again).
        st.calc.set_kind(CalcKind::find("feed").unwrap());
        for (name, text) in [
            ("flow", "2.4"),
            ("dose", "2.5"),
            ("strength", "12.5"),
            ("specific-gravity", "1.2"),
            ("pump-capacity", "10"),
        ] {
            st.calc.edit(name, text);
        }
        // The plant path from an invented raw water (the demo site's path and doses).
        for (name, text) in [
            ("ph", "7.6"),
            ("temperature", "54"),
            ("alkalinity", "60"),
            ("calcium", "50"),
        ] {
            st.path.edit_water(name, text);
        }
        st.log.select(4);
        // November typed into the log's date fields: the same list on any day the test runs.
        st.log.edit_dates("2026-11-01", "2026-11-30");
    }
    handle.refresh();
    app.show().expect("show");

    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let sizes = [
        ("phone", 400, 860),
        ("tablet", 1280, 800),
        ("desktop", 1600, 1000),
    ];
    let mut failures = Vec::new();
    // Every screen at every size in Spanish (`-es`, the longer labels), then in English.
    for (lang, suffix) in [(1, "-es"), (0, "")] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        for (size_name, w, h) in sizes {
            for (index, screen) in SCREENS.iter().enumerate() {
                app.global::<Nav>().invoke_go(index as i32);
                let pixels = render(&window, w, h);
                let path = out.join(format!("{screen}-{size_name}{suffix}.png"));
                save_png(&path, &pixels, w, h);
                let dark = dark_pixels(&pixels, w, h, w < 720);
                let colours = distinct_colours(&pixels);
                // Anti-aliased text yields many shades; a blank or single-colour frame has few.
                if colours < 40 || dark < 1500 {
                    failures.push(format!(
                        "{}: {colours} colours, {dark} dark pixels",
                        path.display()
                    ));
                }
            }
        }
    }
    // The log on a phone with an entry opened (its history and the change buttons), and a
    // tablet with the correction form open.
    app.global::<Nav>().invoke_go(3);
    app.global::<LogAdapter>().set_compact_detail(true);
    let pixels = render(&window, 400, 860);
    save_png(&out.join("log-phone-detail.png"), &pixels, 400, 860);
    if dark_pixels(&pixels, 400, 860, true) < 1500 {
        failures.push("log-phone-detail.png has no text".into());
    }
    app.global::<LogAdapter>().invoke_open_correct();
    let pixels = render(&window, 1280, 800);
    save_png(&out.join("log-tablet-correct.png"), &pixels, 1280, 800);
    app.global::<LogAdapter>().invoke_cancel_edit();
    app.global::<LogAdapter>().set_compact_detail(false);
    // A reversed pair of days on a phone: the message in words must fit beside nothing.
    handle
        .state
        .borrow_mut()
        .log
        .edit_dates("2026-11-30", "2026-11-01");
    handle.refresh();
    let pixels = render(&window, 400, 860);
    save_png(&out.join("log-phone-date-problem.png"), &pixels, 400, 860);
    if dark_pixels(&pixels, 400, 860, true) < 1500 {
        failures.push("log-phone-date-problem.png has no text".into());
    }
    handle
        .state
        .borrow_mut()
        .log
        .edit_dates("2026-11-01", "2026-11-30");
    handle.refresh();
    // "Show the work" opened, on a desktop-sized window.
    app.global::<CalcAdapter>().set_show_work(true);
    app.global::<Nav>().invoke_go(1);
    let pixels = render(&window, 1600, 1000);
    save_png(
        &out.join("calculators-desktop-work.png"),
        &pixels,
        1600,
        1000,
    );
    app.global::<CalcAdapter>().set_show_work(false);
    // The whole Settings screen (site profile editor) in a tall window, for review at phone
    // and tablet width: the normal window shows only its top.
    for (name, w, h) in [("phone", 400, 7000), ("tablet", 1280, 5400)] {
        app.global::<Nav>().invoke_go(4);
        let pixels = render(&window, w, h);
        save_png(
            &out.join(format!("settings-{name}-full.png")),
            &pixels,
            w,
            h,
        );
        if dark_pixels(&pixels, w, h, w < 720) < 20_000 {
            failures.push(format!("settings-{name}-full.png shows too little text"));
        }
    }
    // The Spanish and high-contrast variants of the calculator screen, for review.
    app.global::<SettingsAdapter>().invoke_set_lang(1);
    app.global::<SettingsAdapter>()
        .invoke_set_high_contrast(true);
    app.global::<Nav>().invoke_go(1);
    let pixels = render(&window, 400, 860);
    save_png(
        &out.join("calculators-phone-es-contrast.png"),
        &pixels,
        400,
        860,
    );
    if dark_pixels(&pixels, 400, 860, true) < 1500 {
        failures.push("calculators-phone-es-contrast.png has no text".into());
    }
    assert!(
        failures.is_empty(),
        "blank or textless renders:\n{}",
        failures.join("\n")
    );
}

/// The coagulation calculator with its further results and the Plots screen with the
/// coagulation curve and the chosen point, at tablet size (the calculator in use picks the
/// curve). Rendered for review and checked to hold text.
#[test]
fn coagulation_and_its_curve_render() {
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("coagulation").unwrap());
        for (name, text) in [
            ("flow", "2.40"),
            ("jar-dose", "32"),
            ("alkalinity", "38"),
            ("alkalinity-setpoint", "25"),
            ("ph", "7.15"),
            ("temperature", "50"),
            ("strength", "8.3"),
            ("specific-gravity", "1.335"),
            ("pump-capacity", "20"),
        ] {
            st.calc.edit(name, text);
        }
    }
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let mut failures = Vec::new();
    for (index, name) in [
        (1, "calculators-tablet-coagulation"),
        (2, "plots-tablet-coagulation"),
    ] {
        app.global::<Nav>().invoke_go(index);
        let pixels = render(&window, 1280, 800);
        save_png(&out.join(format!("{name}.png")), &pixels, 1280, 800);
        if dark_pixels(&pixels, 1280, 800, false) < 1500 || distinct_colours(&pixels) < 40 {
            failures.push(name);
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// Chlorine gas on a phone, English and Spanish (the longer labels), in a window tall enough
/// to hold the inputs and the whole results card: the feeder fields, the rate to set, the
/// feeder setting and the "no product volume" sentence must fit at 400 px.
#[test]
fn chlorine_gas_renders_at_phone_width() {
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("chlorination").unwrap());
        let gas = st
            .calc
            .view()
            .products
            .iter()
            .position(|p| p.id == "chlorine-gas")
            .expect("chlorine gas offered");
        st.calc.set_product(gas);
        st.prefill_from_site();
        for (name, text) in [
            ("chlorine-demand", "1.50"),
            ("target-residual", "1.00"),
            ("purity", "100.0"),
            ("gas-feeder-capacity", "100.0"),
        ] {
            st.calc.edit(name, text);
        }
    }
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let (w, h) = (400, 2200);
    let mut failures = Vec::new();
    for (lang, name) in [
        (0, "calculators-phone-chlorine-gas"),
        (1, "calculators-phone-chlorine-gas-es"),
    ] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        app.global::<Nav>().invoke_go(1);
        let pixels = render(&window, w, h);
        save_png(&out.join(format!("{name}.png")), &pixels, w, h);
        if dark_pixels(&pixels, w, h, true) < 5000 {
            failures.push(name);
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// Softening with its equilibrium lines and the lime feeder, on a tall phone window and a
/// tablet: the longer result labels ("Hardness left, at equilibrium …") must fit.
#[test]
fn softening_renders_with_its_equilibrium_lines() {
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("softening").unwrap());
        for (name, text) in [
            ("total-hardness", "265"),
            ("calcium-hardness", "190"),
            ("alkalinity", "175"),
            ("ph", "7.45"),
            ("temperature", "55"),
            ("excess-lime", "35"),
            ("soda-ash-purity", "98"),
        ] {
            st.calc.edit(name, text);
        }
        let shown: Vec<String> = match st.calc.view().status {
            molefeed::app::calc::Status::Ready(r) => {
                r.extras.iter().map(|e| e.key.clone()).collect()
            }
            other => panic!("no softening result: {other:?}"),
        };
        assert!(shown.iter().any(|k| k == "ph-softened"), "{shown:?}");
    }
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let mut failures = Vec::new();
    app.global::<Nav>().invoke_go(1);
    for (name, w, h, phone) in [
        ("calculators-phone-softening", 400, 2400, true),
        ("calculators-tablet-softening", 1280, 1400, false),
    ] {
        let pixels = render(&window, w, h);
        save_png(&out.join(format!("{name}.png")), &pixels, w, h);
        if dark_pixels(&pixels, w, h, phone) < 5000 {
            failures.push(name);
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// A reading carried over from Softening (with where and when it was taken, and Clear) and a
/// refused "-1" marked at its field, on a phone.
#[test]
fn carried_readings_and_refusals_render_at_phone_width() {
    let (window, app, handle) = headless_app();
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let (w, h) = (400, 1400);
    let mut failures = Vec::new();
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("softening").unwrap());
        let alkalinity = st.calc.fields().iter().position(|f| f.name == "alkalinity");
        st.type_in_field(alkalinity.unwrap(), "200");
        st.open_calculator(CalcKind::find("coagulation").unwrap());
    }
    handle.refresh();
    app.show().expect("show");
    app.global::<Nav>().invoke_go(1);
    let pixels = render(&window, w, h);
    save_png(&out.join("calculators-phone-carried.png"), &pixels, w, h);
    if dark_pixels(&pixels, w, h, true) < 5000 {
        failures.push("carried");
    }
    // A pH read for softening carries to pH adjustment, whose pH is the water's `ph` too.
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("softening").unwrap());
        let ph = st.calc.fields().iter().position(|f| f.name == "ph");
        st.type_in_field(ph.unwrap(), "7.9");
        st.open_calculator(CalcKind::find("ph-adjustment").unwrap());
        assert_eq!(st.calc.text("ph"), "7.9");
    }
    handle.refresh();
    for (name, (pw, ph)) in [("phone", (w, h)), ("tablet", (1280, 800))] {
        let pixels = render(&window, pw, ph);
        save_png(
            &out.join(format!("calculators-{name}-carried-ph.png")),
            &pixels,
            pw,
            ph,
        );
        if dark_pixels(&pixels, pw, ph, name == "phone") < 5000 {
            failures.push("carried pH");
        }
    }
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("chlorination").unwrap());
        st.calc.edit("chlorine-demand", "1.5");
        st.calc.edit("target-residual", "-1");
    }
    handle.refresh();
    let pixels = render(&window, w, h);
    save_png(&out.join("calculators-phone-refused.png"), &pixels, w, h);
    if dark_pixels(&pixels, w, h, true) < 5000 {
        failures.push("refused");
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// How many ink pixels lie in the strips just inside a button's left and right edges, where
/// its padding should be: any there means the label touches the edge (or runs past it).
/// `(x, y, w, h)` in pixels; the strips leave out the border and the rounded corners.
fn ink_at_edges(
    pixels: &[Rgb8Pixel],
    width: u32,
    (x, y, w, h): (u32, u32, u32, u32),
    pill: bool,
) -> usize {
    if w < 24 || h < 24 {
        return 0;
    }
    // The button's own background: a pixel of its top padding, in the middle.
    let bg = pixels[((y + 5) * width + x + w / 2) as usize];
    let differs = |p: Rgb8Pixel| {
        (p.r as i32 - bg.r as i32).abs()
            + (p.g as i32 - bg.g as i32).abs()
            + (p.b as i32 - bg.b as i32).abs()
            > 120
    };
    // A pill (a chip) curves in at its ends: only its middle rows have a straight padding.
    let (rows, inset) = if pill {
        (y + h / 2 - 4..y + h / 2 + 4, 6)
    } else {
        (y + 12..y + h - 12, 4)
    };
    let mut n = 0;
    for row in rows {
        for col in (x + inset..x + inset + 5).chain(x + w - inset - 5..x + w - inset) {
            if differs(pixels[(row * width + col) as usize]) {
                n += 1;
            }
        }
    }
    n
}

/// Spanish at phone width, the longest labels: every button of Settings and the Log keeps its
/// label clear of its edges ("Renombrar" once touched them) and lies inside the window; the
/// window is rendered tall, so each control is in view. Rendered for review too.
#[test]
fn spanish_fits_at_phone_width() {
    use i_slint_backend_testing::ElementHandle;
    let (window, app, _handle) = headless_app();
    app.show().expect("show");
    app.global::<SettingsAdapter>().invoke_set_lang(1);
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let (w, h) = (400u32, 7000u32);
    let mut failures = Vec::new();
    let mut seen = 0;
    for (screen, name) in [(4, "settings-phone-full-es"), (3, "log-phone-full-es")] {
        app.global::<Nav>().invoke_go(screen);
        let pixels = render(&window, w, h);
        save_png(&out.join(format!("{name}.png")), &pixels, w, h);
        for kind in ["ActionButton", "Chip"] {
            for button in ElementHandle::find_by_element_type_name(&app, kind) {
                let label = button.accessible_label().unwrap_or_default();
                let p = button.absolute_position();
                let s = button.size();
                if s.width < 1.0 || s.height < 1.0 {
                    continue;
                }
                // Chips of a sideways row may run past the window: they scroll, with a hint.
                if kind == "ActionButton" && (p.x < 0.0 || p.x + s.width > w as f32 + 0.5) {
                    failures.push(format!("{name}: {label:?} runs out of the window"));
                    continue;
                }
                // A chip under the row's scroll hint (the fade and arrow at the right edge,
                // 44 px) is meant to be covered: it says the row goes on.
                let hinted = kind == "Chip" && p.x + s.width > w as f32 - 60.0;
                if hinted || p.x < 0.0 || p.x + s.width > w as f32 || p.y + s.height > h as f32 {
                    continue;
                }
                seen += 1;
                let rect = (p.x as u32, p.y as u32, s.width as u32, s.height as u32);
                let ink = ink_at_edges(&pixels, w, rect, kind == "Chip");
                if ink > 0 {
                    failures.push(format!(
                        "{name}: {label:?} touches its edges ({ink} pixels, {:.0} px wide)",
                        s.width
                    ));
                }
            }
        }
    }
    assert!(
        seen > 20,
        "only {seen} buttons checked: the finder saw too few"
    );
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The Stock view and the Log screen's reading and report cards, in English and Spanish, at
/// phone and tablet size; the cards also in a tall phone window (the normal one shows the
/// list first). Rendered for review and checked to hold text.
#[test]
fn stock_and_the_reading_forms_render() {
    let (window, app, handle) = headless_app();
    handle.state.borrow_mut().set_initials("KT");
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let mut failures = Vec::new();
    for (lang, suffix) in [(0, ""), (1, "-es")] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        for (name, screen, w, h) in [
            ("stock-phone", 7, 400, 860),
            ("stock-tablet", 7, 1280, 800),
            ("log-forms-phone-full", 3, 400, 4200),
            ("log-forms-tablet", 3, 1280, 800),
            ("log-forms-tablet-full", 3, 1280, 2600),
        ] {
            app.global::<Nav>().invoke_go(screen);
            let pixels = render(&window, w, h);
            let file = format!("{name}{suffix}.png");
            save_png(&out.join(&file), &pixels, w, h);
            if dark_pixels(&pixels, w, h, w < 720) < 1500 || distinct_colours(&pixels) < 40 {
                failures.push(file);
            }
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// Scrolls whatever is under `(x, y)` as far down as it goes (the wheel, many times).
fn scroll_down(window: &MinimalSoftwareWindow, x: f32, y: f32) {
    for _ in 0..60 {
        window.dispatch_event(slint::platform::WindowEvent::PointerScrolled {
            position: slint::LogicalPosition::new(x, y),
            delta_x: 0.0,
            delta_y: -400.0,
        });
    }
}

/// Issues 13 and 14 for review, at phone and tablet size in English and Spanish: the jar test
/// with its stock's formula typed (the text field from the engine's table), the chip rows with
/// their scroll hint, and the card scrolled to its end with its follow-up button; then
/// chlorination with "Show the work" open, scrolled to the end, where the advisory must be.
#[test]
fn the_jar_test_and_the_open_work_render_to_their_end() {
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        st.set_units(molefeed::engine::quantity::UnitSystem::Si);
        st.open_calculator(CalcKind::find("jar-test").unwrap());
        let ferric = st
            .calc
            .view()
            .products
            .iter()
            .position(|p| p.id == "ferric-chloride");
        st.calc.set_product(ferric.unwrap());
        for (name, text) in [
            ("stock-concentration", "10"),
            ("ml-dosed", "3"),
            ("jar-volume-ml", "1000"),
            ("strength", "40"),
            ("specific-gravity", "1.415"),
        ] {
            st.calc.edit(name, text);
        }
        st.calc.edit_text_input("stock-compound", "FeCl3·6H2O");
    }
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let mut failures = Vec::new();
    let shot = |name: String, w: u32, h: u32, failures: &mut Vec<String>| {
        let pixels = render(&window, w, h);
        save_png(&out.join(format!("{name}.png")), &pixels, w, h);
        if dark_pixels(&pixels, w, h, w < 720) < 1500 || distinct_colours(&pixels) < 40 {
            failures.push(name);
        }
    };
    for (lang, suffix) in [(0, ""), (1, "-es")] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        for (size, w, h, x) in [("phone", 400, 860, 200.0), ("tablet", 1280, 800, 1000.0)] {
            // Each size from the top: a view made anew, then scrolled to the card's end.
            app.global::<Nav>().invoke_go(0);
            app.global::<Nav>().invoke_go(1);
            shot(
                format!("calculators-{size}-jar-test{suffix}"),
                w,
                h,
                &mut failures,
            );
            scroll_down(&window, x, 500.0);
            shot(
                format!("calculators-{size}-jar-test-end{suffix}"),
                w,
                h,
                &mut failures,
            );
        }
    }
    {
        let mut st = handle.state.borrow_mut();
        st.open_calculator(CalcKind::find("chlorination").unwrap());
        st.calc.edit("chlorine-demand", "1.5");
        st.calc.edit("target-residual", "1.0");
    }
    handle.refresh();
    app.global::<CalcAdapter>().set_show_work(true);
    for (lang, suffix) in [(0, ""), (1, "-es")] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        for (size, w, h, x) in [("phone", 400, 860, 200.0), ("tablet", 1280, 800, 1000.0)] {
            app.global::<Nav>().invoke_go(0);
            app.global::<Nav>().invoke_go(1);
            render(&window, w, h);
            scroll_down(&window, x, 500.0);
            shot(
                format!("calculators-{size}-work-end{suffix}"),
                w,
                h,
                &mut failures,
            );
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

/// The Plant path's two-target panel at the demo plant's post-treatment channel (caustic and
/// soda ash), with both targets typed and both doses shown, scrolled so the panel is in view:
/// at phone and tablet size, English and Spanish (the longer labels must wrap, not clip).
#[test]
fn the_two_target_panel_renders_at_phone_and_tablet() {
    use i_slint_backend_testing::ElementHandle;
    use molefeed::app::ui::PathAdapter;
    use slint::Model;
    let (window, app, handle) = headless_app();
    {
        let mut st = handle.state.borrow_mut();
        let st = &mut *st;
        for (name, text) in [
            ("ph", "7.6"),
            ("temperature", "54"),
            ("alkalinity", "60"),
            ("calcium", "50"),
        ] {
            st.path.edit_water(name, text);
        }
        let post = st
            .session
            .site()
            .path
            .iter()
            .position(|p| p.id == "post-treatment");
        st.path
            .open_two_targets(&st.session, post.expect("the demo's post-treatment"));
        st.path.edit_two_targets("target-ph", "8.0");
        st.path.edit_two_targets("target-alkalinity", "70");
    }
    handle.refresh();
    app.show().expect("show");
    let out = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/screenshots");
    std::fs::create_dir_all(&out).unwrap();
    let mut failures = Vec::new();
    for (lang, suffix) in [(0, ""), (1, "-es")] {
        app.global::<SettingsAdapter>().invoke_set_lang(lang);
        app.global::<Nav>().invoke_go(6);
        let path = app.global::<PathAdapter>();
        assert_eq!(
            path.get_two_doses().row_count(),
            2,
            "{}",
            path.get_two_message()
        );
        for (size_name, w, h) in [("phone", 400, 860), ("tablet", 1280, 800)] {
            // Scrolled down until the panel's title is laid out in view, then to its top.
            let title = path.get_two_title().to_string();
            let mut y = 0.0;
            path.set_viewport_y(y);
            render(&window, w, h);
            loop {
                let found = ElementHandle::find_by_accessible_label(&app, &title).next();
                if let Some(e) = found {
                    // The point's name above the panel, where the screen has room.
                    let above = if w < 720 { 60.0 } else { 215.0 };
                    y -= e.absolute_position().y - above;
                    path.set_viewport_y(y);
                    break;
                }
                y -= 200.0;
                assert!(y > -8000.0, "the panel's title never came into view");
                path.set_viewport_y(y);
                render(&window, w, h);
            }
            let pixels = render(&window, w, h);
            let file = out.join(format!("path-{size_name}-two-targets{suffix}.png"));
            save_png(&file, &pixels, w, h);
            if dark_pixels(&pixels, w, h, w < 720) < 1500 || distinct_colours(&pixels) < 40 {
                failures.push(file.display().to_string());
            }
        }
    }
    assert!(failures.is_empty(), "blank or textless: {failures:?}");
}

//! Per-keystroke cost in the field app (issue "The field app": recompute plus UI update per
//! keystroke ≤ 2 ms). One iteration types a new flow into the feed-and-pump calculator through
//! Slint's testing backend, exactly as a key press arrives: the text changes, the controller
//! parses it, the real dosing engine recomputes, and the result card's models are updated.
//! Rendering is not included (the software renderer draws on the next frame, in its own time).
use criterion::{Criterion, criterion_group, criterion_main};
use i_slint_backend_testing::ElementHandle;
use molefeed::app::dose_log::PersistentLog;
use molefeed::app::i18n::Texts;
use molefeed::app::numbers::Lang;
use molefeed::app::seams::connected_engine;
use molefeed::app::ui::AppWindow;
use molefeed::app::{Deps, attach};
use slint::ComponentHandle;

fn find(app: &AppWindow, key: &str) -> ElementHandle {
    let label = Texts::new(Lang::En).get(key);
    ElementHandle::find_by_accessible_label(app, &label)
        .next()
        .unwrap_or_else(|| panic!("no element {label}"))
}

fn keystroke(c: &mut Criterion) {
    // Only the bundled font, as the UI tests render: an empty configuration plus the app's
    // own fallback step. Set before Slint or fontconfig start any thread.
    let folder = std::env::temp_dir().join(format!("molefeed-bench-fonts-{}", std::process::id()));
    std::fs::create_dir_all(&folder).expect("temp folder");
    let no_fonts = folder.join("no-fonts.conf");
    std::fs::write(
        &no_fonts,
        "<?xml version=\"1.0\"?>\n<fontconfig></fontconfig>\n",
    )
    .expect("conf");
    // SAFETY: no other thread exists yet.
    unsafe { std::env::set_var("FONTCONFIG_FILE", &no_fonts) };
    molefeed::app::fonts::use_bundled_font_as_fallback(&folder).expect("bundled font");
    i_slint_backend_testing::init_no_event_loop();
    let app = AppWindow::new().expect("window");
    let _handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: Box::new(PersistentLog::scratch()),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    app.window()
        .set_size(slint::LogicalSize::new(1280.0, 800.0));
    app.show().expect("show");
    find(&app, "nav-calculators").invoke_accessible_default_action();
    find(&app, "calc-feed").invoke_accessible_default_action();
    let flow = find(&app, "field-flow");
    for (field, text) in [
        ("field-dose", "2"),
        ("field-strength", "12.5"),
        ("field-specific-gravity", "1.2"),
        ("field-pump-capacity", "10"),
    ] {
        find(&app, field).set_accessible_value(text);
    }
    flow.set_accessible_value("2.4");
    let result = find(&app, "result-dose");
    let values = ["2.4", "2.41", "2.415", "2.4"];
    let mut i = 0;
    c.bench_function(
        "keystroke: type flow, recompute feed, update result card",
        |b| {
            b.iter(|| {
                i = (i + 1) % values.len();
                flow.set_accessible_value(values[i]);
            })
        },
    );
    assert!(
        result.accessible_value().is_some_and(|v| !v.is_empty()),
        "the result card shows a dose"
    );
}

criterion_group!(benches, keystroke);
criterion_main!(benches);

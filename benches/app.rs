//! Per-keystroke cost in the field app (recompute plus UI update per keystroke ≤ 2 ms, with
//! the range beside each number). One iteration types a new reading into a calculator through
//! Slint's testing backend, exactly as a key press arrives: the text changes, the controller
//! parses it, the real dosing engine recomputes (again for each reading moved by its
//! precision), and the result card's models are updated. Three calculators: the plain feed,
//! softening and pH adjustment, the dearest (an equilibrium solve per run).
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
        // Tall enough that every field of the longest calculator is laid out (the testing
        // backend finds only elements that exist).
        .set_size(slint::LogicalSize::new(1280.0, 3000.0));
    app.show().expect("show");
    find(&app, "nav-calculators").invoke_accessible_default_action();
    // The plain feed, and softening: the dearest calculator, with equilibrium solves for every
    // reading moved by its precision (the range beside each number).
    keystroke_on(
        c,
        &app,
        "keystroke: type flow, recompute feed with ranges, update result card",
        &["calc-feed"],
        &[
            ("field-dose", "2"),
            ("field-strength", "12.5"),
            ("field-specific-gravity", "1.2"),
            ("field-pump-capacity", "10"),
        ],
        ("field-flow", &["2.4", "2.41", "2.415", "2.4"]),
    );
    keystroke_on(
        c,
        &app,
        "keystroke: type pH, recompute softening with ranges, update result card",
        &["calc-softening", "product-quicklime"],
        &[
            ("field-flow", "1.10"),
            ("field-total-hardness", "265"),
            ("field-calcium-hardness", "190"),
            ("field-alkalinity", "175"),
            ("field-temperature", "55"),
            ("field-excess-lime", "35"),
            ("field-lime-purity", "90"),
            ("field-soda-ash-purity", "98"),
        ],
        ("field-ph", &["7.45", "7.46", "7.451", "7.4"]),
    );
    keystroke_on(
        c,
        &app,
        "keystroke: type target pH, recompute pH adjustment with ranges, update result card",
        &["calc-ph-adjustment", "product-sodium-hydroxide"],
        &[
            ("field-flow", "2.40"),
            ("field-ph", "6.90"),
            ("field-alkalinity", "60"),
            ("field-temperature", "57"),
            ("field-strength", "50"),
            ("field-specific-gravity", "1.52"),
            ("field-pump-capacity", "5"),
        ],
        ("field-target-ph", &["7.8", "7.81", "7.805", "7.9"]),
    );
}

/// Opens a calculator by tapping `path`, fills `fields`, then measures one keystroke in the
/// `typed` field: recompute with ranges and the card's update.
fn keystroke_on(
    c: &mut Criterion,
    app: &AppWindow,
    name: &str,
    path: &[&str],
    fields: &[(&str, &str)],
    typed: (&str, &[&str]),
) {
    for key in path {
        find(app, key).invoke_accessible_default_action();
    }
    for (field, text) in fields {
        find(app, field).set_accessible_value(*text);
    }
    let field = find(app, typed.0);
    let values = typed.1;
    field.set_accessible_value(values[0]);
    let result = find(app, "result-dose");
    assert!(
        result.accessible_value().is_some_and(|v| !v.is_empty()),
        "{name}: the result card shows a dose"
    );
    let mut i = 0;
    c.bench_function(name, |b| {
        b.iter(|| {
            i = (i + 1) % values.len();
            field.set_accessible_value(values[i]);
        })
    });
    assert!(
        result.accessible_value().is_some_and(|v| !v.is_empty()),
        "{name}: the result card still shows a dose"
    );
}

criterion_group!(benches, keystroke);
criterion_main!(benches);

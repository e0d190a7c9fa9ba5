//! UI tests through Slint's testing backend: find elements by accessible label, type, tap,
//! and read what the screen shows.
//!
//! Design choice: every lookup goes through [`one`], which fails the test when an element is
//! missing (for example when the UI was compiled without debug info) — a test never passes by
//! finding nothing. The engine is a stand-in that reports inputs back, so these tests check
//! wiring, parsing and formatting, not chemistry.

mod common;

use i_slint_backend_testing::ElementHandle;
use molefeed::app::dose_log::PersistentLog;
use molefeed::app::i18n::Texts;
use molefeed::app::numbers::{self, Lang};
use molefeed::app::seams::{Unconnected, connected_engine};
use molefeed::app::ui::{
    AppWindow, LogAdapter, Nav, ReadingAdapter, SettingsAdapter, StartAdapter, StockAdapter,
};
use molefeed::app::{AppHandle, Deps, attach};
use slint::{ComponentHandle, Model};
use std::rc::Rc;

fn start(engine: Rc<dyn molefeed::app::seams::CalcEngine>) -> (AppWindow, AppHandle) {
    start_at(engine, 1280.0, 800.0)
}

fn start_at(
    engine: Rc<dyn molefeed::app::seams::CalcEngine>,
    width: f32,
    height: f32,
) -> (AppWindow, AppHandle) {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine,
            log: Box::new(PersistentLog::scratch()),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    app.window()
        .set_size(slint::LogicalSize::new(width, height));
    app.show().expect("show");
    (app, handle)
}

/// Exactly one element with this accessible label; anything else fails the test.
fn one(app: &AppWindow, label: &str) -> ElementHandle {
    let found: Vec<_> = ElementHandle::find_by_accessible_label(app, label).collect();
    assert_eq!(
        found.len(),
        1,
        "expected one element labelled {label:?}, found {}",
        found.len()
    );
    found.into_iter().next().unwrap()
}

fn count(app: &AppWindow, label: &str) -> usize {
    ElementHandle::find_by_accessible_label(app, label).count()
}

fn tap(app: &AppWindow, label: &str) {
    one(app, label).invoke_accessible_default_action();
}

fn type_into(app: &AppWindow, label: &str, text: &str) {
    one(app, label).set_accessible_value(text);
}

fn en(key: &str) -> String {
    Texts::new(Lang::En).get(key)
}

fn fill_feed_setting(app: &AppWindow, flow: &str) {
    tap(app, &en("nav-calculators"));
    tap(app, &en("calc-feed"));
    type_into(app, &en("field-flow"), flow);
    type_into(app, &en("field-dose"), "2");
    type_into(app, &en("field-strength"), "12.5");
    type_into(app, &en("field-specific-gravity"), "1.2");
    type_into(app, &en("field-pump-capacity"), "10");
}

#[test]
fn typed_inputs_show_the_engine_result_with_cautions_and_advisory() {
    let (app, _handle) = start(Rc::new(common::EchoEngine));
    fill_feed_setting(&app, "1");
    let dose = one(&app, &en("result-dose"));
    assert_eq!(dose.accessible_value().unwrap(), "2.00");
    // The stand-in reports 1 MGD = 3785.41 m³/d as kg/d; US units show it in lb/d.
    let expected_feed = numbers::format_sig(3785.411784 / 0.45359237, 3, Lang::En);
    assert_eq!(
        one(&app, &en("result-feed")).accessible_value().unwrap(),
        expected_feed
    );
    // Cautions carry their level's word, worst first; the advisory note is always there.
    let danger = format!("{}: test caution: danger", en("caution-level-danger"));
    one(&app, &danger);
    one(
        &app,
        &format!("{}: test caution: info", en("caution-level-info")),
    );
    assert_eq!(
        count(&app, &en("calc-result")),
        0,
        "message shown next to a result"
    );
}

#[test]
fn the_phone_layout_has_the_same_controls() {
    // Tall enough that nothing is scrolled out of view: the finders only see visible elements.
    let (app, _handle) = start_at(Rc::new(common::EchoEngine), 400.0, 2000.0);
    // On a phone the calculator is opened from the Start screen's quick entries.
    tap(&app, &en("calc-feed"));
    assert_eq!(app.global::<Nav>().get_screen(), 1);
    type_into(&app, &en("field-flow"), "1");
    type_into(&app, &en("field-dose"), "2");
    type_into(&app, &en("field-strength"), "12.5");
    type_into(&app, &en("field-specific-gravity"), "1.2");
    type_into(&app, &en("field-pump-capacity"), "10");
    assert_eq!(
        one(&app, &en("result-dose")).accessible_value().unwrap(),
        "2.00"
    );
    one(&app, &en("calc-log-dose"));
}

#[test]
fn invalid_input_shows_a_message_and_no_number() {
    let (app, _handle) = start(Rc::new(common::EchoEngine));
    fill_feed_setting(&app, "1,5");
    one(&app, &en("number-wrong-mark"));
    let message = one(&app, &en("calc-result"));
    assert_eq!(message.accessible_value().unwrap(), en("calc-invalid"));
    assert_eq!(
        count(&app, &en("result-dose")),
        0,
        "a dose was shown for invalid input"
    );
    type_into(&app, &en("field-flow"), "abc");
    one(&app, &en("number-invalid"));
    type_into(&app, &en("field-flow"), "1.5");
    assert_eq!(count(&app, &en("calc-result")), 0);
    one(&app, &en("result-dose"));
}

#[test]
fn unconnected_engine_says_so_instead_of_a_number() {
    let (app, _handle) = start(Rc::new(Unconnected));
    fill_feed_setting(&app, "1");
    let message = one(&app, &en("calc-result"));
    assert_eq!(
        message.accessible_value().unwrap(),
        en("calc-not-connected")
    );
    assert_eq!(count(&app, &en("result-dose")), 0);
}

#[test]
fn the_real_feed_engine_fills_the_card_with_translated_cautions() {
    // A tall window so the whole cautions list is in view (finders skip clipped elements).
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    fill_feed_setting(&app, "1");
    // The product chips come from the engine's catalog; hypochlorite is offered.
    one(&app, &en("product-sodium-hypochlorite"));
    let view = handle.state.borrow().calc.view();
    let molefeed::app::calc::Status::Ready(result) = view.status else {
        panic!("no result from the engine: {:?}", view.status)
    };
    assert_eq!(
        one(&app, &en("result-dose")).accessible_value().unwrap(),
        result.dose
    );
    assert_eq!(
        one(&app, &en("result-pump")).accessible_value().unwrap(),
        result.pump
    );
    // Every engine caution reaches the screen as level word + translated text.
    assert!(!result.cautions.is_empty());
    let texts = Texts::new(Lang::En);
    for c in &result.cautions {
        assert!(
            texts.has(&c.code),
            "no translation for engine caution {}",
            c.code
        );
        let word = en(&format!("caution-level-{}", c.level.code()));
        let args: Vec<(&str, String)> = c
            .params
            .iter()
            .map(|(k, v)| (k.as_str(), v.clone()))
            .collect();
        let label = format!("{word}: {}", texts.get_args(&c.code, &args));
        if count(&app, &label) != 1 {
            let shown: Vec<_> = ElementHandle::find_by_element_type_name(&app, "CautionItem")
                .filter_map(|e| e.accessible_label())
                .filter(|l| l.starts_with(&word))
                .collect();
            panic!("caution {label:?} not shown; shown: {shown:?}");
        }
    }
}

#[test]
fn switching_language_changes_labels_and_the_decimal_mark() {
    let (app, _handle) = start(Rc::new(common::EchoEngine));
    let es = {
        let mut t = Texts::new(Lang::En);
        t.set_lang(Lang::Es);
        t
    };
    one(&app, &en("nav-start"));
    tap(&app, &en("nav-settings"));
    tap(&app, "Español");
    assert_eq!(
        count(&app, &en("nav-start")),
        0,
        "English label left after switching"
    );
    one(&app, &es.get("nav-start"));
    one(&app, &es.get("settings-language"));
    // Spanish input takes a comma and results use one.
    tap(&app, &es.get("nav-calculators"));
    tap(&app, &es.get("calc-feed"));
    type_into(&app, &es.get("field-flow"), "1");
    type_into(&app, &es.get("field-dose"), "2,5");
    type_into(&app, &es.get("field-strength"), "12,5");
    type_into(&app, &es.get("field-specific-gravity"), "1,2");
    type_into(&app, &es.get("field-pump-capacity"), "10");
    assert_eq!(
        one(&app, &es.get("result-dose"))
            .accessible_value()
            .unwrap(),
        "2,50"
    );
}

#[test]
fn log_button_stores_the_dose_in_the_log() {
    let (app, handle) = start(connected_engine());
    fill_feed_setting(&app, "1");
    assert!(handle.state.borrow().entries().is_empty());
    // Without initials nothing is logged, and the operator is told why.
    tap(&app, &en("calc-log-dose"));
    assert!(handle.state.borrow().entries().is_empty());
    handle.state.borrow_mut().set_initials("jm");
    tap(&app, &en("calc-log-dose"));
    let entries = handle.state.borrow().entries();
    assert_eq!(entries.len(), 1);
    assert_eq!(entries[0].dose.dose_mg_per_l(), Some(2.0));
    assert_eq!(entries[0].dose.chemical, "Cl2");
    // The Start screen lists it and warns that the in-memory log is not saved.
    tap(&app, &en("nav-start"));
    one(&app, &en("banner-not-saved"));
    assert_eq!(app.global::<Nav>().get_screen(), 0);
}

#[test]
fn back_returns_to_the_previous_screen() {
    let (app, _handle) = start(connected_engine());
    tap(&app, &en("nav-log"));
    tap(&app, &en("nav-about"));
    app.global::<Nav>().invoke_back();
    assert_eq!(app.global::<Nav>().get_screen(), 3);
    app.global::<Nav>().invoke_back();
    assert_eq!(app.global::<Nav>().get_screen(), 0);
}

#[test]
fn log_button_writes_the_dose_to_the_crash_safe_log_file() {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let dir = std::env::temp_dir().join(format!("molefeed-ui-log-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: Box::new(molefeed::app::dose_log::PersistentLog::new(&dir, "ui-test")),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    app.window()
        .set_size(slint::LogicalSize::new(1280.0, 800.0));
    app.show().expect("show");
    handle.state.borrow_mut().set_initials("KT");
    fill_feed_setting(&app, "1");
    tap(&app, &en("calc-log-dose"));
    assert!(handle.state.borrow().log_is_persistent());
    let site = handle.state.borrow().entries()[0].site.clone();
    drop(handle);
    drop(app);
    // The entry is on disk: a fresh open of the site's file (the app's lock is released) finds it.
    let log = molefeed::log::Log::open(&molefeed::log::site_file(&dir, &site), "checker")
        .expect("log reopens");
    let views = log.current().unwrap();
    assert_eq!(views.len(), 1);
    assert_eq!(views[0].dose.operator, "KT");
    assert_eq!(views[0].dose.dose_mg_per_l(), Some(2.0));
    assert_eq!(views[0].dose.chemical, "Cl2");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Every caution of `result` is on screen as its level word and translated text.
fn assert_cautions_shown(app: &AppWindow, result: &molefeed::app::calc::ResultView) {
    let texts = Texts::new(Lang::En);
    for c in &result.cautions {
        assert!(
            texts.has(&c.code),
            "no translation for engine caution {}",
            c.code
        );
        let word = en(&format!("caution-level-{}", c.level.code()));
        let args: Vec<(&str, String)> = c
            .params
            .iter()
            .map(|(k, v)| (k.as_str(), v.clone()))
            .collect();
        let label = format!("{word}: {}", texts.get_args(&c.code, &args));
        assert_eq!(count(app, &label), 1, "caution {label:?} not shown once");
    }
}

fn ready(handle: &AppHandle) -> molefeed::app::calc::ResultView {
    let view = handle.state.borrow().calc.view();
    match view.status {
        molefeed::app::calc::Status::Ready(result) => *result,
        other => panic!("no result from the engine: {other:?}"),
    }
}

#[test]
fn coagulation_shows_alkalinity_ph_and_the_alkali_chosen() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-coagulation"));
    tap(&app, &en("mode-alkali-lime"));
    one(&app, &en("product-alum-liquid"));
    for (key, text) in [
        ("field-flow", "2.40"),
        ("field-jar-dose", "32"),
        ("field-alkalinity", "38"),
        ("field-alkalinity-setpoint", "25"),
        ("field-ph", "7.15"),
        ("field-temperature", "50"),
        ("field-strength", "8.3"),
        ("field-specific-gravity", "1.335"),
        ("field-pump-capacity", "20"),
    ] {
        type_into(&app, &en(key), text);
    }
    let result = ready(&handle);
    assert_eq!(
        one(&app, &en("result-dose")).accessible_value().unwrap(),
        "32.0",
        "three figures at least, whatever was typed"
    );
    for extra in &result.extras {
        assert_eq!(
            one(&app, &en(&format!("result-{}", extra.key)))
                .accessible_value()
                .unwrap(),
            extra.value,
            "{}",
            extra.key
        );
    }
    let keys: Vec<_> = result.extras.iter().map(|e| e.key.as_str()).collect();
    for k in [
        "alkalinity-consumed",
        "ph-after-coagulant",
        "supplemental-alkali",
        "ph-after-alkali",
    ] {
        assert!(keys.contains(&k), "{k} missing from {keys:?}");
    }
    assert_cautions_shown(&app, &result);
    // Two figures typed for the jar dose and the alkalinity: three shown all the same (the
    // ranges say how far they hold), and the least precise entry named.
    assert_eq!(result.figures, 3);
    let note = Texts::new(Lang::En).get_args(
        "calc-figures-limited",
        &[("figures", "3".into()), ("field", en("field-jar-dose"))],
    );
    assert_eq!(count(&app, &note), 1, "figures note {note:?} not shown");
    // The work is shown with translated headings.
    tap(&app, &format!("▸ {}", en("calc-show-work")));
    assert!(count(&app, &en("trace-alkalinity-per-dose")) >= 1);
}

#[test]
fn softening_shows_lime_and_soda_ash() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-softening"));
    tap(&app, &en("product-quicklime"));
    for (key, text) in [
        ("field-flow", "1.10"),
        ("field-total-hardness", "265"),
        ("field-calcium-hardness", "190"),
        ("field-alkalinity", "175"),
        ("field-ph", "7.45"),
        ("field-temperature", "55"),
        ("field-excess-lime", "35"),
        ("field-lime-purity", "90"),
        ("field-soda-ash-purity", "98"),
    ] {
        type_into(&app, &en(key), text);
    }
    let result = ready(&handle);
    assert_eq!(result.chemical, "product-quicklime");
    for key in ["soda-ash-dose", "ph-softened", "hardness-softened"] {
        assert_eq!(
            one(&app, &en(&format!("result-{key}")))
                .accessible_value()
                .unwrap(),
            result.extras.iter().find(|e| e.key == key).unwrap().value,
            "{key}"
        );
    }
    // Lime is dry-fed: its card speaks of a feeder; without the feeder's scale, no setting.
    assert_eq!(count(&app, &en("result-pump")), 0);
    assert_eq!(
        one(&app, &en("result-feeder-setting"))
            .accessible_value()
            .unwrap(),
        "—"
    );
    assert_cautions_shown(&app, &result);
    // Calcium above total hardness: a message in words, with both readings, and no number.
    type_into(&app, &en("field-calcium-hardness"), "300");
    assert_eq!(count(&app, &en("result-dose")), 0);
    assert_eq!(
        one(&app, &en("calc-result")).accessible_value().unwrap(),
        "Calcium hardness (300 mg/L) is more than the total hardness (265 mg/L): check both readings."
    );
    // The same refusal in Spanish: no English left in it.
    tap(&app, &en("nav-settings"));
    tap(&app, "Español");
    let es = Texts::new(Lang::Es);
    tap(&app, &es.get("nav-calculators"));
    assert_eq!(
        one(&app, &es.get("calc-result"))
            .accessible_value()
            .unwrap(),
        "La dureza cálcica (300 mg/L) es mayor que la dureza total (265 mg/L): revise ambas lecturas."
    );
}

/// A window on a log that already holds operator-entered doses (two chemicals, two taps).
fn start_with_log(width: f32, height: f32) -> (AppWindow, AppHandle) {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let mut log = PersistentLog::scratch();
    for (when, point, chemical, dose) in [
        ("2026-11-30T07:00:00Z", "Clearwell", "NaOCl", 1.5),
        ("2026-12-01T07:00:00Z", "Raw water", "NaOH", 12.0),
        ("2026-12-01T08:00:00Z", "Clearwell", "NaOCl", 1.7),
    ] {
        common::log_typed(&mut log, when, "Demo site", point, chemical, dose).expect("seed entry");
    }
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: Box::new(log),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    handle.state.borrow_mut().set_initials("KT");
    handle.refresh();
    app.window()
        .set_size(slint::LogicalSize::new(width, height));
    app.show().expect("show");
    tap(&app, &en("nav-log"));
    (app, handle)
}

/// The accessible label of a list row (place, chemical, dose, status word).
fn row_label(point: &str, chemical: &str, dose: &str, status: &str) -> String {
    let base = format!("Demo site · {point} {chemical} {dose}");
    if status.is_empty() {
        base
    } else {
        format!("{base} {status}")
    }
}

#[test]
fn correcting_an_entry_with_a_reason_adds_history_and_changes_the_value() {
    let (app, handle) = start_with_log(1280.0, 2000.0);
    // A correction records a recomputed result: the feed setting recomputed at 1.8 mg/L (the
    // flow typed to three figures, so the card shows the dose to the two it was typed with).
    fill_feed_setting(&app, "1.00");
    type_into(&app, &en("field-dose"), "1.8");
    tap(&app, &en("nav-log"));
    tap(&app, &row_label("Clearwell", "NaOCl", "1.50", ""));
    assert_eq!(app.global::<LogAdapter>().get_history().row_count(), 1);
    tap(&app, &en("log-correct"));
    type_into(&app, &en("log-edit-dose"), "1.8");
    type_into(&app, &en("log-edit-reason"), "meter misread");
    tap(&app, &en("log-save-correction"));
    // The list shows the effective value, marked in words; the recomputed card names what
    // its dose is expressed as (hypochlorite is dosed as Cl2).
    one(
        &app,
        &row_label("Clearwell", "Cl2", "1.80", &en("log-status-corrected")),
    );
    assert_eq!(
        count(&app, &row_label("Clearwell", "NaOCl", "1.50", "")),
        0,
        "the old value is still listed as current"
    );
    // The history has the original and the correction, with initials and the reason.
    let history = app.global::<LogAdapter>().get_history();
    assert_eq!(history.row_count(), 2);
    let original = history.row_data(0).unwrap();
    let correction = history.row_data(1).unwrap();
    assert!(
        original.heading.contains("JM") && original.heading.contains("1.50"),
        "{original:?}"
    );
    assert!(
        correction.heading.contains("KT") && correction.heading.contains("1.80"),
        "{correction:?}"
    );
    one(&app, "Reason: meter misread");
    one(&app, &en("log-detail-corrected"));
    let entries = handle.state.borrow().entries();
    assert_eq!(entries[0].dose.dose_mg_per_l(), Some(1.8));
    let whole = handle.state.borrow().logged_dose(entries[0].id).unwrap();
    assert!(
        whole.result("flow").is_some(),
        "the whole recomputed result"
    );
}

#[test]
fn voiding_without_a_reason_says_so_and_changes_nothing() {
    let (app, handle) = start_with_log(1280.0, 2000.0);
    tap(&app, &row_label("Raw water", "NaOH", "12.0", ""));
    tap(&app, &en("log-void"));
    tap(&app, &en("log-save-void"));
    one(&app, &en("log-need-reason"));
    assert!(handle.state.borrow().entries().iter().all(|e| !e.voided()));
    assert_eq!(app.global::<LogAdapter>().get_history().row_count(), 1);
    // With a reason the entry stays listed, marked voided in words.
    type_into(&app, &en("log-edit-reason"), "logged at the wrong tap");
    tap(&app, &en("log-save-void"));
    one(
        &app,
        &row_label("Raw water", "NaOH", "12.0", &en("log-status-voided")),
    );
    assert_eq!(app.global::<LogAdapter>().get_history().row_count(), 2);
    assert_eq!(
        count(&app, &en("log-correct")),
        0,
        "a voided entry offers no change"
    );
}

#[test]
fn filtering_by_chemical_lists_only_that_chemical() {
    let (app, _handle) = start_with_log(1280.0, 2000.0);
    assert_eq!(app.global::<LogAdapter>().get_rows().row_count(), 3);
    tap(&app, "NaOH");
    let rows = app.global::<LogAdapter>().get_rows();
    assert_eq!(rows.row_count(), 1);
    assert_eq!(rows.row_data(0).unwrap().chemical, "NaOH");
    one(&app, &row_label("Raw water", "NaOH", "12.0", ""));
    assert_eq!(count(&app, &row_label("Clearwell", "NaOCl", "1.50", "")), 0);
    // Combined with a tap that has no NaOH: nothing matches, and the list says so.
    tap(&app, "Clearwell");
    assert_eq!(app.global::<LogAdapter>().get_rows().row_count(), 0);
    one(&app, &en("log-empty"));
    tap(&app, &en("log-any-chemical"));
    assert_eq!(app.global::<LogAdapter>().get_rows().row_count(), 2);
}

#[test]
fn on_a_phone_the_entry_opens_full_width_with_large_targets() {
    let (app, _handle) = start_with_log(400.0, 2000.0);
    tap(&app, &row_label("Clearwell", "NaOCl", "1.70", ""));
    // The detail replaces the list until "Back to the list".
    assert_eq!(count(&app, &en("log-filter")), 0);
    let back = one(&app, &format!("← {}", en("log-back-to-list")));
    for label in [en("log-correct"), en("log-void")] {
        let size = one(&app, &label).size();
        assert!(
            size.height >= 48.0 && size.width >= 48.0,
            "{label}: {size:?}"
        );
    }
    back.invoke_accessible_default_action();
    one(&app, &en("log-filter"));
    for label in ["NaOCl", "Clearwell", &en("log-range-today")] {
        let size = one(&app, label).size();
        assert!(size.height >= 48.0, "{label}: {size:?}");
    }
    // The system back key closes an open entry first, then leaves the screen.
    tap(&app, &row_label("Clearwell", "NaOCl", "1.70", ""));
    assert_eq!(count(&app, &en("log-filter")), 0);
    let log_screen = app.global::<Nav>().get_screen();
    app.global::<Nav>().invoke_back();
    assert_eq!(
        app.global::<Nav>().get_screen(),
        log_screen,
        "still on the log"
    );
    one(&app, &en("log-filter"));
    app.global::<Nav>().invoke_back();
    assert_ne!(
        app.global::<Nav>().get_screen(),
        log_screen,
        "back left the log"
    );
}

#[test]
fn typed_days_filter_the_list_and_the_export_holds_exactly_those_entries() {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let dir = std::env::temp_dir().join(format!("molefeed-ui-export-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let mut log = PersistentLog::scratch();
    for (when, point, dose) in [
        ("2026-10-31T23:59:00Z", "Clearwell", 1.1),
        ("2026-11-01T00:05:00Z", "Clearwell", 2.2),
        ("2026-11-30T23:55:00Z", "Raw water", 3.3),
        ("2026-12-01T06:00:00Z", "Clearwell", 4.4),
    ] {
        common::log_typed(&mut log, when, "Demo site", point, "NaOCl", dose).expect("seed entry");
    }
    let app = AppWindow::new().expect("window");
    let _handle = attach(
        &app,
        Deps {
            engine: Rc::new(common::EchoEngine),
            log: Box::new(log),
            data_dir: Some(dir.clone()),
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    app.window()
        .set_size(slint::LogicalSize::new(400.0, 2400.0));
    app.show().expect("show");
    tap(&app, &en("nav-log"));
    let rows = || app.global::<LogAdapter>().get_rows().row_count();
    assert_eq!(rows(), 4);

    // A day that does not exist: said in words, nothing listed, nothing exported.
    type_into(&app, &en("log-date-from"), "2026-11-31");
    one(
        &app,
        "The From date “2026-11-31” is not a day of the calendar. Type year-month-day, for example 2026-11-30 (or 20261130).",
    );
    assert_eq!(rows(), 0);
    tap(&app, &en("log-export"));
    one(&app, &en("log-export-fix-dates"));

    // November, typed (the digits alone, as a numeric keypad types them, for the end).
    type_into(&app, &en("log-date-from"), "2026-11-01");
    type_into(&app, &en("log-date-to"), "20261130");
    assert_eq!(rows(), 2);
    // The chip row scrolls sideways on a phone, so the choice is read from the model.
    let ranges = app.global::<LogAdapter>().get_ranges();
    let chosen: Vec<_> = ranges.iter().filter(|r| r.selected).collect();
    assert_eq!(chosen.len(), 1);
    assert_eq!(
        chosen[0].label,
        en("log-range-custom"),
        "typing chose typed dates"
    );
    let summary = app.global::<LogAdapter>().get_date_summary();
    assert_eq!(
        summary,
        "Entries shown: 2, from 2026-11-01 to 2026-11-30 (UTC days)."
    );
    tap(&app, &en("log-export"));
    let file = dir.join("exports/molefeed-log-2026-11-01_2026-11-30.csv");
    let status = app.global::<LogAdapter>().get_status();
    assert_eq!(
        status,
        format!(
            "Entries exported: 2 (from 2026-11-01 to 2026-11-30, UTC days). File: {}",
            file.display()
        )
    );
    let text = std::fs::read_to_string(&file).expect("the export is where the message says");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 3, "header and two rows: {text}");
    assert!(
        lines[1].contains("2026-11-01T00:05:00Z") && lines[1].contains(",2.2,"),
        "{text}"
    );
    assert!(
        lines[2].contains("2026-11-30T23:55:00Z") && lines[2].contains(",3.3,"),
        "{text}"
    );

    // A quick range replaces the typed days with its own.
    tap(&app, &en("log-range-all"));
    assert_eq!(app.global::<LogAdapter>().get_date_from(), "");
    assert_eq!(rows(), 4);
    // The date fields are full-size touch targets at phone width.
    for label in [en("log-date-from"), en("log-date-to")] {
        let size = one(&app, &label).size();
        assert!(
            size.height >= 48.0 && size.width >= 96.0,
            "{label}: {size:?}"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_tap_added_in_settings_is_offered_on_start() {
    // Tall so the whole editor is in view (the finders skip scrolled-out elements).
    let (app, handle) = start_at(Rc::new(common::EchoEngine), 400.0, 4000.0);
    // A fresh start opens on the embedded demo plant and its taps.
    let picker = || {
        one(&app, &en("start-point"))
            .accessible_value()
            .unwrap_or_default()
    };
    assert_eq!(picker(), "Raw water tap at screen house");
    tap(&app, &en("nav-settings"));
    type_into(&app, &en("settings-tap-name"), "Filter 3 outlet");
    tap(&app, &en("settings-add-tap"));
    one(&app, &en("site-saved"));
    tap(&app, &en("nav-start"));
    assert_eq!(app.global::<Nav>().get_screen(), 0);
    // The picker shows the new tap, chosen, and a logged dose would be recorded at it.
    assert_eq!(picker(), "Filter 3 outlet");
    let taps: Vec<String> = app
        .global::<StartAdapter>()
        .get_points()
        .iter()
        .map(|t| t.to_string())
        .collect();
    assert!(taps.contains(&"Filter 3 outlet".to_string()), "{taps:?}");
    assert_eq!(handle.state.borrow().point(), Some("Filter 3 outlet"));
}

/// What a tap samples and whether a limit is enforced are set in Settings: the clearwell tap
/// marked as process water is no longer held to the limits; the demo's alkalinity target,
/// marked enforced, is a danger beyond it from then on.
#[test]
fn a_taps_water_and_a_limits_force_are_set_in_settings() {
    // Tall enough for the whole editor, the limits' card included.
    let (app, handle) = start_at(Rc::new(common::EchoEngine), 400.0, 9000.0);
    tap(&app, &en("nav-settings"));
    let finished = |h: &AppHandle| -> Vec<bool> {
        h.state
            .borrow()
            .site()
            .sampling_taps
            .iter()
            .map(|t| t.finished_water)
            .collect()
    };
    // The demo: raw and settled taps sample process water, the clearwell the finished.
    assert_eq!(finished(&handle), [false, false, true]);
    let process: Vec<_> =
        ElementHandle::find_by_accessible_label(&app, &en("settings-tap-process")).collect();
    assert_eq!(process.len(), 3);
    assert_eq!(process[0].accessible_checked(), Some(true));
    assert_eq!(process[2].accessible_checked(), Some(false));
    process[2].invoke_accessible_default_action();
    assert_eq!(finished(&handle), [false, false, false]);
    one(&app, &en("site-saved"));
    // The alkalinity target (the demo's third limit) says it is not enforced; marked so, saved.
    app.global::<SettingsAdapter>().invoke_edit_limit(2);
    assert!(!app.global::<SettingsAdapter>().get_limit_enforceable());
    tap(&app, &en("settings-limit-enforceable"));
    tap(&app, &en("settings-save-limit"));
    let alkalinity = handle
        .state
        .borrow()
        .site()
        .effective_limit("alkalinity")
        .unwrap();
    assert!(alkalinity.enforceable, "{alkalinity:?}");
}

#[test]
fn an_impossible_specific_gravity_is_refused_in_words() {
    let (app, handle) = start_at(Rc::new(common::EchoEngine), 400.0, 4000.0);
    tap(&app, &en("nav-settings"));
    // The editor's form, loaded from the demo's hypochlorite entry by its Edit button's action.
    app.global::<SettingsAdapter>().invoke_edit_product(0);
    assert_eq!(
        app.global::<SettingsAdapter>().get_strength().as_str(),
        "12.5"
    );
    type_into(&app, &en("site-sg"), "5");
    tap(&app, &en("settings-save-product"));
    let message = app.global::<SettingsAdapter>().get_message().to_string();
    assert_eq!(message, "Not saved: Specific gravity 5 is outside 0.5–2.5.");
    one(&app, &message);
    let sg = handle
        .state
        .borrow()
        .site()
        .delivered_of("sodium-hypochlorite")
        .and_then(|d| d.sg);
    assert_eq!(sg, Some(1.165), "the refused SG replaced the stored one");
    // A number in the wrong form is named, too; a good one is saved.
    type_into(&app, &en("site-sg"), "1,2");
    tap(&app, &en("settings-save-product"));
    one(
        &app,
        &format!("{}: {}", en("site-sg"), en("number-wrong-mark")),
    );
    type_into(&app, &en("site-sg"), "1.2");
    tap(&app, &en("settings-save-product"));
    one(&app, &en("site-saved"));
}

#[test]
fn the_calculator_starts_from_the_site_and_warns_against_its_permit() {
    let (app, _handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    // Prefilled from the demo plant: its hypochlorite as delivered, pump A, the typical flow.
    let value = |label: &str| one(&app, label).accessible_value().unwrap_or_default();
    assert_eq!(value(&en("field-strength")), "12.5");
    assert_eq!(value(&en("field-specific-gravity")), "1.165");
    assert_eq!(value(&en("field-pump-capacity")), "10");
    assert_eq!(value(&en("field-flow")), "2.4");
    type_into(&app, &en("field-chlorine-demand"), "1.5");
    type_into(&app, &en("field-target-residual"), "4.5");
    let texts = Texts::new(Lang::En);
    let warning = texts.get_args(
        "site-limit-above",
        &[
            ("field", en("field-target-residual")),
            ("value", "4.50".into()),
            ("limit", "4.00".into()),
            ("unit", "mg/L".into()),
            (
                "source",
                "Plant permit (invented): 0.2 mg/L minimum entering distribution; \
                 maximum as the federal MRDL"
                    .into(),
            ),
        ],
    );
    // Beyond the permit, an enforceable limit: a danger, not a warning.
    one(&app, &format!("{}: {warning}", en("caution-level-danger")));
    assert_eq!(
        count(&app, &format!("{}: {warning}", en("caution-level-warning"))),
        0
    );
    // Back inside the permit: the caution goes.
    type_into(&app, &en("field-target-residual"), "1.0");
    assert_eq!(
        count(&app, &format!("{}: {warning}", en("caution-level-danger"))),
        0
    );
}

#[test]
fn ammonia_may_stay_empty_and_when_typed_adds_the_breakpoint_dose() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    for (key, text) in [
        ("field-flow", "2.40"),
        ("field-chlorine-demand", "1.20"),
        ("field-target-residual", "1.00"),
        ("field-strength", "12.5"),
        ("field-specific-gravity", "1.165"),
        ("field-pump-capacity", "10.0"),
    ] {
        type_into(&app, &en(key), text);
    }
    let before = ready(&handle);
    assert_eq!(count(&app, &en("result-breakpoint-dose")), 0);
    // An optional field says so in its label.
    let ammonia = format!("{} {}", en("field-ammonia-n"), en("field-optional"));
    type_into(&app, &ammonia, "0.40");
    let after = ready(&handle);
    let shown = one(&app, &en("result-breakpoint-dose"))
        .accessible_value()
        .unwrap();
    assert_eq!(
        shown,
        after
            .extras
            .iter()
            .find(|e| e.key == "breakpoint-dose")
            .unwrap()
            .value
    );
    assert!(after.outcome.dose_mg_per_l > before.outcome.dose_mg_per_l);
}

/// Chlorine gas through a rotameter, typed from scratch: the feeder setting on screen is the
/// engine's `feed()` with a gas feeder, rounded as the card says.
#[test]
fn chlorine_gas_is_set_on_its_gas_feeder() {
    use molefeed::engine::dosing::catalog::{Catalog, Strength, StrengthBasis};
    use molefeed::engine::dosing::feed::{FeedInput, PumpKind, UsableRange, feed};
    use molefeed::engine::dosing::units::{Flow, FlowUnit, MassRateUnit};
    use molefeed::engine::sigfig::Measured;

    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    tap(&app, &en("product-chlorine-gas"));
    for (key, text) in [
        ("field-flow", "2.40"),
        ("field-chlorine-demand", "1.50"),
        ("field-target-residual", "1.00"),
        ("field-purity", "100.0"),
        ("field-gas-feeder-capacity", "100.0"),
    ] {
        type_into(&app, &en(key), text);
    }
    let result = ready(&handle);
    assert_eq!(result.chemical, "product-chlorine-gas");
    let catalog = Catalog::builtin().unwrap();
    let direct = feed(
        &catalog,
        &FeedInput {
            flow: Flow::new(Measured::exact(2.40), FlowUnit::Mgd),
            dose: Measured::exact(2.50),
            product: "chlorine-gas".into(),
            strength: Strength::new(Measured::exact(100.0), StrengthBasis::Purity, None),
            pump: Some(PumpKind::GasFeeder {
                capacity: 100.0,
                unit: MassRateUnit::LbPerDay,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        },
    )
    .unwrap();
    let percent = direct.pump.unwrap().percent;
    let shown = |key: &str| one(&app, &en(key)).accessible_value().unwrap();
    assert_eq!(
        shown("result-feeder-setting"),
        numbers::format_sig(percent, result.figures, Lang::En)
    );
    assert_eq!(
        shown("result-feeder-rate"),
        numbers::format_sig(direct.product_lb_per_day, result.figures, Lang::En)
    );
    assert_eq!(shown("result-dose"), "2.50");
    assert_cautions_shown(&app, &result);
}

/// A gas has no specific gravity and no product volume: neither is asked for nor shown, and
/// the card says why; back on hypochlorite both return.
#[test]
fn chlorine_gas_offers_no_specific_gravity_or_product_volume() {
    let (app, _handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    // Hypochlorite (the demo plant's) first: its SG and pump are asked for.
    one(&app, &en("field-specific-gravity"));
    one(&app, &en("field-pump-capacity"));
    tap(&app, &en("product-chlorine-gas"));
    for label in [
        "field-specific-gravity",
        "field-pump-capacity",
        "field-strength",
    ] {
        assert_eq!(count(&app, &en(label)), 0, "{label} offered for a gas");
    }
    one(&app, &en("field-purity"));
    one(&app, &en("field-gas-feeder-capacity"));
    type_into(&app, &en("field-chlorine-demand"), "1.5");
    type_into(&app, &en("field-target-residual"), "1.0");
    type_into(&app, &en("field-purity"), "100");
    type_into(&app, &en("field-gas-feeder-capacity"), "100");
    assert_eq!(count(&app, &en("result-product")), 0, "a volume for a gas");
    assert_eq!(count(&app, &en("result-pump")), 0);
    let note = Texts::new(Lang::En).get_args(
        "result-no-volume-gas",
        &[("product", en("product-chlorine-gas"))],
    );
    one(&app, &note);
    tap(&app, &en("product-sodium-hypochlorite"));
    one(&app, &en("field-specific-gravity"));
    one(&app, &en("result-product"));
    assert_eq!(count(&app, &note), 0);
}

// ---- Issue 13: the result in view, errors at the field, each calculator's own inputs.

/// Scrolls the calculator screen as far down as it goes (the wheel over the middle of it,
/// many times), then lets any animation finish.
fn scroll_to_end(app: &AppWindow, x: f32, y: f32) {
    for _ in 0..60 {
        app.window()
            .dispatch_event(slint::platform::WindowEvent::PointerScrolled {
                position: slint::LogicalPosition::new(x, y),
                delta_x: 0.0,
                delta_y: -400.0,
            });
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(50));
    }
    i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(2000));
}

/// Whether `e` lies wholly inside the window's first `bottom` pixels.
fn in_view(e: &ElementHandle, bottom: f32) -> bool {
    let (pos, size) = (e.absolute_position(), e.size());
    pos.y >= 0.0 && pos.y + size.height <= bottom + 0.5
}

/// The phone's cross-check: its deviation is in the summary bar, in view at 400×860 with the
/// fields scrolled to their top, whatever the length of the form.
#[test]
fn the_phone_pump_cross_check_shows_its_deviation_without_scrolling() {
    // Filled in a tall window (the finders see only what is in view), then made a phone.
    let (app, handle) = start_at(connected_engine(), 400.0, 3000.0);
    tap(&app, &en("calc-pump-check"));
    for (key, text) in [
        ("field-flow", "2.4"),
        ("field-dose", "3.0"),
        ("field-drawdown-volume", "140"),
        ("field-drawdown-time", "60"),
        ("field-pump-setting", "24.3"),
        ("field-strength", "12.5"),
        ("field-specific-gravity", "1.16"),
    ] {
        type_into(&app, &en(key), text);
    }
    let result = ready(&handle);
    let deviation = result
        .extras
        .iter()
        .find(|e| e.lead)
        .expect("the cross-check leads with its deviation");
    app.window().set_size(slint::LogicalSize::new(400.0, 860.0));
    i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(100));
    let bar = one(&app, &en("calc-summary"));
    assert!(in_view(&bar, 860.0 - 68.0), "the summary bar is off screen");
    let summary = bar.accessible_value().unwrap().to_string();
    assert!(
        summary.starts_with(&format!("{} {} %", en("result-deviation"), deviation.value)),
        "{summary:?}"
    );
}

/// Alkalinity 200 typed in Softening does not change the pH adjustment's dose; in a
/// calculator without its own alkalinity it appears with where it came from, and clears.
#[test]
fn a_softening_alkalinity_does_not_change_ph_adjustment_unless_carried_over_visibly() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-ph-adjustment"));
    for (key, text) in [
        ("field-flow", "2.4"),
        ("field-ph", "6.8"),
        ("field-target-ph", "7.5"),
        ("field-alkalinity", "40"),
        ("field-temperature", "59"),
    ] {
        type_into(&app, &en(key), text);
    }
    let before = ready(&handle).dose;
    tap(&app, &en("calc-softening"));
    type_into(&app, &en("field-alkalinity"), "200");
    tap(&app, &en("calc-ph-adjustment"));
    assert_eq!(
        one(&app, &en("field-alkalinity"))
            .accessible_value()
            .unwrap(),
        "40"
    );
    assert_eq!(ready(&handle).dose, before, "Softening's alkalinity leaked");
    // Coagulation has no alkalinity of its own: Softening's is offered, saying so.
    tap(&app, &en("calc-coagulation"));
    let alkalinity = one(&app, &en("field-alkalinity"));
    assert_eq!(alkalinity.accessible_value().unwrap(), "200");
    let view = handle.state.borrow().calc.view();
    let field = view.fields.iter().find(|f| f.name == "alkalinity").unwrap();
    let when = field.carried.as_ref().expect("marked as carried over").at;
    let origin = Texts::new(Lang::En).get_args(
        "calc-carried",
        &[
            ("calculator", en("calc-softening")),
            ("time", when.format("%H:%M").to_string()),
        ],
    );
    one(&app, &format!("{}: {origin}", en("field-alkalinity")));
    tap(
        &app,
        &format!("{} {}", en("calc-clear"), en("field-alkalinity")),
    );
    assert_eq!(
        one(&app, &en("field-alkalinity"))
            .accessible_value()
            .unwrap(),
        ""
    );
    assert_eq!(
        count(&app, &format!("{}: {origin}", en("field-alkalinity"))),
        0
    );
}

/// "-1" typed as the residual target is marked at that field, in words, and the card says it
/// as an error, not as information.
#[test]
fn a_typed_minus_one_is_marked_at_its_field() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    type_into(&app, &en("field-chlorine-demand"), "1.5");
    type_into(&app, &en("field-target-residual"), "-1");
    let view = handle.state.borrow().calc.view();
    let marked: Vec<_> = view
        .fields
        .iter()
        .filter(|f| f.refusal.is_some())
        .map(|f| f.name)
        .collect();
    assert_eq!(marked, ["target-residual"]);
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    assert!(calc.get_message_error(), "a refusal looks like an error");
    let row = calc.get_fields().row_data(
        view.fields
            .iter()
            .position(|f| f.name == "target-residual")
            .unwrap(),
    );
    let error = row.unwrap().error.to_string();
    assert!(
        error.starts_with(&en("field-target-residual")),
        "named by its field: {error:?}"
    );
    one(&app, &error);
    // Letters are not dropped: the field says they are no number.
    type_into(&app, &en("field-target-residual"), "1.O");
    one(&app, &en("number-invalid"));
}

/// "Enter your initials in Settings first" goes once initials are entered; the card shows the
/// tap the dose goes to and changes it; the dose is logged there.
#[test]
fn the_calculator_shows_the_tap_and_its_messages_clear_with_their_cause() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    tap(&app, &en("nav-calculators"));
    tap(&app, &en("calc-chlorination"));
    type_into(&app, &en("field-chlorine-demand"), "1.5");
    type_into(&app, &en("field-target-residual"), "1.0");
    tap(&app, &en("calc-log-dose"));
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    assert_eq!(calc.get_note().as_str(), en("log-need-initials"));
    app.global::<SettingsAdapter>()
        .invoke_set_initials("KT".into());
    assert_eq!(calc.get_note().as_str(), "", "the cause is gone");
    let taps = handle.state.borrow().taps();
    assert!(taps.len() >= 2, "{taps:?}");
    let chip = one(&app, &taps[1]);
    assert_eq!(chip.accessible_checked(), Some(false));
    chip.invoke_accessible_default_action();
    assert_eq!(one(&app, &taps[1]).accessible_checked(), Some(true));
    assert_eq!(handle.state.borrow().point(), Some(taps[1].as_str()));
    tap(&app, &en("calc-log-dose"));
    assert_eq!(handle.state.borrow().entries()[0].dose.tap, taps[1]);
}

/// The demo plant's name (data/demo-site.json), under which the app logs readings.
const DEMO: &str = "Harrowmere Tarn Water Works (demo)";

/// A tall tablet window on the demo plant with initials set, at the Log screen; `log` is the
/// dose log, `data_dir` where the export folder is.
fn start_on_log(
    log: PersistentLog,
    data_dir: Option<std::path::PathBuf>,
) -> (AppWindow, AppHandle) {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: Box::new(log),
            data_dir,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    assert_eq!(handle.state.borrow().site().name, DEMO);
    handle.state.borrow_mut().set_initials("RK");
    handle.refresh();
    app.window()
        .set_size(slint::LogicalSize::new(1280.0, 3000.0));
    app.show().expect("show");
    tap(&app, &en("nav-log"));
    (app, handle)
}

#[test]
fn a_reading_and_a_delivery_are_recorded_listed_corrected_and_voided() {
    let (app, handle) = start_on_log(PersistentLog::scratch(), None);
    let reading = app.global::<ReadingAdapter>();
    // The tank level of the first tank (the demo's hypochlorite day tank), taken at midnight
    // yesterday: an earlier time, shown as such.
    type_into(&app, &en("reading-value"), "4.5");
    type_into(&app, &en("reading-earlier"), "00:00");
    tap(&app, &en("reading-yesterday"));
    tap(&app, &en("reading-record"));
    one(&app, &en("stock-recorded"));
    one(&app, "Level · Hypochlorite day tank 4.5 ft");
    let yesterday = chrono::Local::now().date_naive() - chrono::Duration::days(1);
    let when = reading.get_rows().row_data(0).unwrap().when;
    assert!(
        when.starts_with(&format!("Taken {yesterday} 00:00, entered ")) && when.ends_with(" · RK"),
        "{when}"
    );
    // A delivery of the first delivered product, in gallons (the US site's unit), with its note.
    tap(&app, &en("reading-kind-delivery"));
    type_into(&app, &en("reading-value"), "280");
    type_into(&app, &en("reading-note-number"), "DN-1104");
    tap(&app, &en("reading-record"));
    let delivery = format!(
        "Delivery · {} · note DN-1104 280 gal",
        en("product-sodium-hypochlorite")
    );
    one(&app, &delivery);
    assert_eq!(reading.get_rows().row_count(), 2);
    // The level, opened from the list, is corrected with a reason.
    tap(&app, "Level · Hypochlorite day tank 4.5 ft");
    assert_eq!(
        reading.get_value(),
        "4.5",
        "the form shows the reading as recorded"
    );
    type_into(&app, &en("reading-value"), "4.25");
    tap(&app, &en("reading-save-correction"));
    one(&app, &en("stock-error-reason"));
    type_into(&app, &en("log-edit-reason"), "misread the sight glass");
    tap(&app, &en("reading-save-correction"));
    one(&app, &en("stock-corrected"));
    one(
        &app,
        &format!(
            "Level · Hypochlorite day tank 4.25 ft {}",
            en("log-status-corrected")
        ),
    );
    // The delivery is voided; it stays listed, marked.
    tap(&app, &delivery);
    type_into(&app, &en("log-edit-reason"), "entered twice");
    tap(&app, &en("reading-save-void"));
    one(&app, &format!("{delivery} {}", en("log-status-voided")));
    let readings = handle.state.borrow().site_readings();
    assert_eq!(
        readings.len(),
        2,
        "corrections and voids are new records, not new rows"
    );
}

#[test]
fn the_stock_view_shows_the_day_tanks_volume_from_a_level_typed_on_the_log_screen() {
    let (app, _handle) = start_on_log(PersistentLog::scratch(), None);
    type_into(&app, &en("reading-value"), "4");
    tap(&app, &en("reading-record"));
    tap(&app, &en("stock-open"));
    assert_eq!(app.global::<Nav>().get_screen(), 7);
    // By hand from data/demo-site.json: a vertical cylinder 4.0 ft across read at 4.0 ft holds
    // π × (2 ft)² × 4 ft = 50.27 ft³ × 7.48052 gal/ft³ (1728 in³ ÷ 231 in³) = 376.0 gal; it is
    // 6.0 ft tall, so 4/6 = 67 % full.
    let volume = one(&app, "Hypochlorite day tank: Volume");
    assert_eq!(volume.accessible_value().unwrap(), "376 gal");
    assert_eq!(
        one(&app, "Hypochlorite day tank: Full")
            .accessible_value()
            .unwrap(),
        "67 %"
    );
    // One level gives no rate: said, never a zero.
    assert_eq!(
        one(&app, "Hypochlorite day tank: Days of supply")
            .accessible_value()
            .unwrap(),
        "—"
    );
    let note = format!(
        "{}: {}",
        en("caution-level-info"),
        Texts::new(Lang::En).get_args("stock-caution-no-rate", &[("days", "7".into())])
    );
    one(&app, &note);
    assert_eq!(app.global::<StockAdapter>().get_tanks().row_count(), 4);
    tap(&app, &format!("← {}", en("stock-back-to-log")));
    assert_eq!(app.global::<Nav>().get_screen(), 3);
}

#[test]
fn the_monthly_report_is_produced_on_the_device_and_saved_in_the_export_folder() {
    let dir = std::env::temp_dir().join(format!("molefeed-ui-report-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let logs = dir.join("logs");
    std::fs::create_dir_all(&logs).unwrap();
    molefeed::log::november::write(&molefeed::log::site_file(&logs, DEMO), DEMO, 0)
        .expect("the invented November");
    let (app, _handle) = start_on_log(PersistentLog::new(&logs, "test"), Some(dir.clone()));
    type_into(&app, &en("report-month"), "2026-11");
    tap(&app, &en("report-save"));
    let exports = dir.join("exports");
    let pdf = exports.join("molefeed-report-2026-11.pdf");
    let csv = exports.join("molefeed-report-2026-11.csv");
    let json = exports.join("molefeed-report-2026-11.json");
    let saved = format!(
        "The month's report was saved: {}, {} and {}",
        pdf.display(),
        csv.display(),
        json.display()
    );
    assert_eq!(app.global::<ReadingAdapter>().get_report_message(), saved);
    assert!(std::fs::read(&pdf).unwrap().starts_with(b"%PDF"));
    assert!(csv.exists() && json.exists());
    // By hand from log::november::Plan: water from day d's round to the next is 2 000 000 +
    // 20 000 × (d mod 5) gal; over d = 1 … 30 the remainders sum to 6 × (1+2+3+4) = 60, so
    // 60 000 000 + 1 200 000 = 61.20 MG.
    let lines = app.global::<ReadingAdapter>().get_report_lines();
    let totals = lines.row_data(0).expect("the totals line");
    assert!(
        totals.starts_with("2026-11-01 to 2026-11-30: 61.20 MG of water treated"),
        "{totals}"
    );
    one(&app, &totals);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_sites_fed_dose_tolerance_is_set_in_settings() {
    common::bundled_fonts_only();
    i_slint_backend_testing::init_no_event_loop();
    let app = AppWindow::new().expect("window");
    let handle = attach(
        &app,
        Deps {
            engine: connected_engine(),
            log: Box::new(PersistentLog::scratch()),
            data_dir: None,
            lang: Some(Lang::En),
            quit_on_root_back: false,
        },
    );
    // Tall enough that the whole Settings screen is in view (the finders see only that).
    app.window()
        .set_size(slint::LogicalSize::new(1280.0, 9000.0));
    app.show().expect("show");
    tap(&app, &en("nav-settings"));
    assert_eq!(
        handle.state.borrow().site().fed_dose_tolerance_percent,
        None
    );
    type_into(&app, &en("settings-fed-tolerance-field"), "80");
    tap(&app, &en("settings-save-fed-tolerance"));
    let message = app.global::<SettingsAdapter>().get_message();
    assert!(
        message.contains(&en("error-reason-site-tolerance-out-of-range")),
        "{message}"
    );
    assert_eq!(
        handle.state.borrow().site().fed_dose_tolerance_percent,
        None
    );
    type_into(&app, &en("settings-fed-tolerance-field"), "10");
    tap(&app, &en("settings-save-fed-tolerance"));
    assert_eq!(
        handle.state.borrow().site().fed_dose_tolerance_percent,
        Some(10.0)
    );
}

/// With "Show the work" open the card scrolls to its end: the advisory is reachable on a
/// phone and on a tablet. Before the fix (`WrapBlock`), on the phone scrolled as far as it
/// goes, the "Cautions" heading stood at y = 439 of 757 and the cautions after it and the
/// advisory were cut off: Slint summed the repeated blocks (trace lines, cautions) at their
/// one-line width, so the card ended about 500 px before its content did.
#[test]
fn the_cards_advisory_is_reachable_with_the_work_open_on_a_phone() {
    advisory_reachable_with_the_work_open(400.0, 860.0, 200.0);
}

#[test]
fn the_cards_advisory_is_reachable_with_the_work_open_on_a_tablet() {
    advisory_reachable_with_the_work_open(1280.0, 800.0, 1000.0);
}

/// One window size per test: the testing platform is set once per thread.
fn advisory_reachable_with_the_work_open(width: f32, height: f32, x: f32) {
    {
        let (app, _handle) = start_at(connected_engine(), width, 3000.0);
        if width < 720.0 {
            tap(&app, &en("calc-chlorination"));
        } else {
            tap(&app, &en("nav-calculators"));
            tap(&app, &en("calc-chlorination"));
        }
        // The demo site fills the product, pump and flow.
        type_into(&app, &en("field-chlorine-demand"), "1.5");
        type_into(&app, &en("field-target-residual"), "1.0");
        tap(&app, &format!("▸ {}", en("calc-show-work")));
        app.window()
            .set_size(slint::LogicalSize::new(width, height));
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(100));
        scroll_to_end(&app, x, 400.0);
        let bottom = if width < 720.0 { height - 68.0 } else { height };
        let advisory: Vec<_> =
            ElementHandle::find_by_accessible_label(&app, &en("advisory-note")).collect();
        assert_eq!(
            advisory.len(),
            1,
            "{width}: advisory not in view at the end"
        );
        assert!(
            in_view(&advisory[0], bottom),
            "{width}: advisory at {:?}+{:?}, window {bottom}",
            advisory[0].absolute_position(),
            advisory[0].size()
        );
    }
}

/// The strings of a model the adapter shows.
fn strings(m: slint::ModelRc<slint::SharedString>) -> Vec<String> {
    m.iter().map(|s| s.to_string()).collect()
}

/// Whether a chip labelled `name` is in view whole between `left` and `right`.
fn chip_in_view(app: &AppWindow, name: &str, left: f32, right: f32) -> bool {
    chip_shown(app, name, left, right, false)
}

/// As [`chip_in_view`]; with `from_start`, a chip wider than the row counts as shown when it
/// starts at the row's left edge.
fn chip_shown(app: &AppWindow, name: &str, left: f32, right: f32, from_start: bool) -> bool {
    ElementHandle::find_by_accessible_label(app, name)
        .filter(|e| e.accessible_role() == Some(i_slint_backend_testing::AccessibleRole::Button))
        .any(|e| {
            let (p, z) = (e.absolute_position(), e.size());
            let too_wide = z.width > right - left;
            p.x >= left - 0.5
                && (p.x + z.width <= right + 0.5 || (from_start && too_wide && p.x <= left + 0.5))
        })
}

/// Every chip row of the calculator screen on a phone: the hint that it scrolls is there
/// exactly when a chip of the row is not in view whole (measured from the chips' own
/// positions, within the row's 12 px margins), for every calculator; both cases occur.
#[test]
fn chip_rows_on_a_phone_show_that_they_scroll_only_when_they_overflow() {
    let (app, _handle) = start_at(connected_engine(), 400.0, 860.0);
    tap(&app, &en("nav-calculators"));
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    let kinds = strings(app.global::<StartAdapter>().get_calculators());
    let (mut overflowing, mut fitting) = (0, 0);
    for k in 0..kinds.len() {
        calc.invoke_pick_kind(k as i32);
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(100));
        let modes = strings(calc.get_modes());
        let products = strings(calc.get_products());
        for (key, names) in [
            ("calc-row-calculators", &kinds),
            ("calc-row-variants", &modes),
            ("calc-row-products", &products),
        ] {
            // A screen with one variant shows no variant row; a calculator without a
            // product choice, no product row.
            if names.len() < if key == "calc-row-variants" { 2 } else { 1 } {
                continue;
            }
            // At either edge or both (the row scrolled to its chosen chip).
            let hint = count(&app, &format!("{}: {}", en(key), en("chips-more")));
            let fits = names.iter().all(|n| chip_in_view(&app, n, 12.0, 388.0));
            assert_eq!(hint > 0, !fits, "{}, row {key}: {names:?}", kinds[k]);
            if fits {
                fitting += 1;
            } else {
                overflowing += 1;
            }
        }
    }
    assert!(
        overflowing > 0 && fitting > 0,
        "{overflowing} rows overflow, {fitting} fit: both cases must be checked"
    );
}

/// On a phone the chosen calculator and product are in view whole, whichever is chosen (from
/// Start or a follow-up, where no finger scrolled the row to them); a chip wider than the row
/// would show from its start (the longest calculator name, 388 px of 376 before it became
/// "Permanganate (Fe, Mn)", did).
#[test]
fn the_chosen_chips_are_in_view_on_a_phone() {
    let (app, _handle) = start_at(connected_engine(), 400.0, 860.0);
    tap(&app, &en("nav-calculators"));
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    let kinds = strings(app.global::<StartAdapter>().get_calculators());
    // The last first: the row must scroll forward to it, then back to the first.
    for k in (0..kinds.len()).rev().chain([0]) {
        calc.invoke_pick_kind(k as i32);
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(100));
        assert!(
            chip_shown(&app, &kinds[k], 12.0, 388.0, true),
            "{}",
            kinds[k]
        );
        let products = strings(calc.get_products());
        if let Some(p) = products.get(calc.get_product_index() as usize) {
            assert!(chip_shown(&app, p, 12.0, 388.0, true), "{}: {p}", kinds[k]);
        }
    }
}

/// Opens calculator `code` through the adapter (its chip may be scrolled out of view) and
/// picks product `product` of it.
fn open_with_product(app: &AppWindow, handle: &AppHandle, code: &str, product: &str) {
    tap(app, &en("nav-calculators"));
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    let kind = molefeed::app::seams::CalcKind::all()
        .iter()
        .position(|k| k.code() == code)
        .unwrap_or_else(|| panic!("no calculator {code}"));
    calc.invoke_pick_kind(kind as i32);
    let index = handle
        .state
        .borrow()
        .calc
        .view()
        .products
        .iter()
        .position(|p| p.id == product)
        .unwrap_or_else(|| panic!("{code} offers no {product}"));
    calc.invoke_pick_product(index as i32);
}

/// Issue 14: a jar-test result offers its follow-up; pressing it opens Coagulation with the
/// jar's product chosen and its dose typed: 10 g/L × 3 mL ÷ 1000 mL = 30 mg/L (g/L = mg/mL,
/// by hand).
#[test]
fn a_jar_test_follow_up_opens_coagulation_with_the_dose_filled_in() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    // SI: the stock in g/L, as the figures by hand take it.
    app.global::<SettingsAdapter>().invoke_set_units(1);
    open_with_product(&app, &handle, "jar-test", "alum-liquid");
    for (key, text) in [
        ("field-stock-concentration", "10"),
        ("field-ml-dosed", "3"),
        ("field-jar-volume-ml", "1000"),
        ("field-strength", "8.3"),
        ("field-specific-gravity", "1.335"),
    ] {
        type_into(&app, &en(key), text);
    }
    ready(&handle);
    let button = format!(
        "→ {}",
        Texts::new(Lang::En).get_args("calc-follow-up", &[("calculator", en("calc-coagulation"))])
    );
    tap(&app, &button);
    let calc = app.global::<molefeed::app::ui::CalcAdapter>();
    let kinds = strings(app.global::<StartAdapter>().get_calculators());
    assert_eq!(
        kinds[calc.get_kind_index() as usize],
        en("calc-coagulation")
    );
    let products = strings(calc.get_products());
    assert_eq!(
        products[calc.get_product_index() as usize],
        en("product-alum-liquid"),
        "the jar's product stays chosen"
    );
    let dose = one(&app, &en("field-jar-dose"))
        .accessible_value()
        .unwrap()
        .to_string();
    assert_eq!(numbers::parse(&dose, Lang::En), Ok(30.0), "{dose:?}");
    // The card offers no follow-up of its own here.
    assert_eq!(count(&app, &button), 0);
}

/// The value `label` shows on the card, and half a unit in its last shown digit.
fn shown(app: &AppWindow, label: &str) -> (f64, f64) {
    let text = one(app, label).accessible_value().unwrap().to_string();
    let value = numbers::parse(&text, Lang::En).unwrap_or_else(|e| panic!("{text:?}: {e:?}"));
    let decimals = text.split_once('.').map_or(0, |(_, d)| d.len()) as i32;
    (value, 0.5 * 10f64.powi(-decimals))
}

/// `molefeed calc jar-test … --json` (the real binary): the value of result `id`.
fn cli_jar_test(units: &str, compound: Option<&str>, id: &str) -> f64 {
    let mut args: Vec<&str> = vec![
        "calc",
        "jar-test",
        "--units",
        units,
        "--product",
        "ferric-chloride",
        "--stock-concentration",
        "10",
        "--ml-dosed",
        "3",
        "--jar-volume-ml",
        "1000",
        "--strength",
        "40",
        "--specific-gravity",
        "1.415",
        "--json",
    ];
    if let Some(c) = compound {
        args.extend(["--stock-compound", c]);
    }
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(&args)
        .output()
        .unwrap();
    let json: serde_json::Value =
        serde_json::from_slice(&out.stdout).unwrap_or_else(|e| panic!("{args:?}: {e}"));
    json["results"][id]["value"]
        .as_f64()
        .unwrap_or_else(|| panic!("{args:?}: {json}"))
}

/// Issue 14: the jar test's stock compound is a field of the app (drawn from the engine's
/// table), and typing a formula in it changes the card as `--stock-compound` changes the
/// command line's result. By hand (IUPAC weights): 30 mg/L of FeCl3·6H2O is
/// 30 × 162.20 / 270.29 = 18.00 mg/L as FeCl3, ÷ 0.40 = 45.0 mg/L of a 40 % product; without
/// the formula, the stock is FeCl3: 30 ÷ 0.40 = 75 mg/L.
#[test]
fn a_stock_formula_typed_in_the_app_changes_the_result_as_on_the_command_line() {
    let (app, handle) = start_at(connected_engine(), 1280.0, 3000.0);
    // SI: the stock in g/L, as the figures by hand take it.
    app.global::<SettingsAdapter>().invoke_set_units(1);
    open_with_product(&app, &handle, "jar-test", "ferric-chloride");
    for (key, text) in [
        ("field-stock-concentration", "10"),
        ("field-ml-dosed", "3"),
        ("field-jar-volume-ml", "1000"),
        ("field-strength", "40"),
        ("field-specific-gravity", "1.415"),
    ] {
        type_into(&app, &en(key), text);
    }
    // The command line reads the numbers in the units the app shows them in.
    let units = match handle.state.borrow().session.units() {
        molefeed::engine::quantity::UnitSystem::Si => "si",
        molefeed::engine::quantity::UnitSystem::Us => "us",
    };
    let label = en("result-jar-dose-product");
    for (compound, by_hand) in [(None, 75.0), (Some("FeCl3·6H2O"), 45.0)] {
        type_into(&app, &en("field-stock-compound"), compound.unwrap_or(""));
        ready(&handle);
        let (app_value, half_digit) = shown(&app, &label);
        let cli = cli_jar_test(units, compound, "jar_dose_product");
        assert!(
            (app_value - cli).abs() <= half_digit + 1e-9,
            "{compound:?}: app shows {app_value}, the command line gives {cli}"
        );
        assert!(
            (cli - by_hand).abs() < 0.005 * by_hand,
            "{compound:?}: {cli}, by hand {by_hand}"
        );
    }
    // A compound that is not the product is refused in the app as on the command line.
    type_into(&app, &en("field-stock-compound"), "Fe2(SO4)3");
    assert_eq!(count(&app, &label), 0);
    let message = one(&app, &en("calc-result"))
        .accessible_value()
        .unwrap()
        .to_string();
    assert!(message.contains("Fe2(SO4)3"), "{message:?}");
}

/// Scrolls the screen down a little at a time (the wheel over its middle) until an element
/// labelled `label` is in view; fails the test if it never is.
fn scroll_until(app: &AppWindow, label: &str) {
    for _ in 0..80 {
        if count(app, label) > 0 {
            return;
        }
        app.window()
            .dispatch_event(slint::platform::WindowEvent::PointerScrolled {
                position: slint::LogicalPosition::new(640.0, 400.0),
                delta_x: 0.0,
                delta_y: -60.0,
            });
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(50));
    }
    panic!("{label:?} never came into view");
}

/// The Plant path's two-target solve at the demo plant's post-treatment channel, where caustic
/// and soda ash are both listed: opened from its point, both targets typed, both doses shown.
#[test]
fn the_plant_path_solves_two_targets_at_the_demo_post_treatment() {
    let (app, handle) = start(connected_engine());
    // The raw water as the path screen keeps it ("pH" alone labels fields of other screens
    // too); the two-target panel is used through the screen.
    for (name, text) in [
        ("ph", "7.6"),
        ("temperature", "54"),
        ("alkalinity", "60"),
        ("calcium", "50"),
    ] {
        handle.state.borrow_mut().path.edit_water(name, text);
    }
    tap(&app, &en("nav-path"));
    // The points are below the raw water: scrolled into view (the search finds what is
    // shown). Only the post-treatment channel lists a pair, so there is one such button.
    scroll_until(&app, &en("path-two-open"));
    tap(&app, &en("path-two-open"));
    one(&app, &en("path-two-close"));
    scroll_until(&app, &en("path-two-value-alkalinity"));
    type_into(&app, &en("path-two-target-ph"), "8.0");
    type_into(&app, &en("path-two-value-alkalinity"), "70");
    let path = app.global::<molefeed::app::ui::PathAdapter>();
    assert_eq!(path.get_two_message(), "", "{}", path.get_two_reach());
    let doses: Vec<String> = path.get_two_doses().iter().map(|d| d.to_string()).collect();
    assert_eq!(doses.len(), 2, "{doses:?}");
    // Each dose on screen, named by its product and said on its chemical's basis.
    scroll_until(&app, &doses[1]);
    for (dose, (product, basis)) in doses.iter().zip([
        ("product-sodium-hydroxide", "NaOH"),
        ("product-soda-ash", "Na2CO3"),
    ]) {
        one(&app, dose);
        assert!(
            dose.starts_with(&format!("{}:", en(product))) && dose.ends_with(basis),
            "{dose}"
        );
    }
    // And they are the controller's, for the same screen.
    let st = handle.state.borrow();
    let texts = Texts::new(Lang::En);
    let view = st.path.view(&st.session, &texts);
    assert_eq!(view.two.unwrap().doses, doses);
    assert!(
        path.get_two_after().starts_with("pH 8.00"),
        "{}",
        path.get_two_after()
    );
}

/// The real engine, counting the calculations asked of it.
struct Counting {
    engine: Rc<dyn molefeed::app::seams::CalcEngine>,
    computes: Rc<std::cell::Cell<usize>>,
}

impl molefeed::app::seams::CalcEngine for Counting {
    fn products(
        &self,
        kind: molefeed::app::seams::CalcKind,
        mode: molefeed::app::seams::CalcMode,
    ) -> Vec<molefeed::app::seams::ProductChoice> {
        self.engine.products(kind, mode)
    }

    fn compute(
        &self,
        request: &molefeed::app::seams::CalcRequest,
    ) -> Result<molefeed::app::seams::CalcOutcome, molefeed::app::seams::SeamError> {
        self.computes.set(self.computes.get() + 1);
        self.engine.compute(request)
    }

    fn titration_curve(
        &self,
        request: &molefeed::app::seams::CalcRequest,
    ) -> Result<molefeed::app::seams::Curve, molefeed::app::seams::SeamError> {
        self.engine.titration_curve(request)
    }
}

#[test]
fn a_keystroke_asks_the_engine_once() {
    // A calculation with its ranges is the dear part of a keystroke: the card, the summary
    // and the follow-up buttons are all read off the one view it gives.
    let computes = Rc::new(std::cell::Cell::new(0));
    let (app, handle) = start(Rc::new(Counting {
        engine: connected_engine(),
        computes: computes.clone(),
    }));
    fill_feed_setting(&app, "1");
    ready(&handle);
    for flow in ["1.1", "1.15", "1.2"] {
        let before = computes.get();
        type_into(&app, &en("field-flow"), flow);
        assert_eq!(computes.get() - before, 1, "typing flow {flow}");
    }
    one(&app, &en("result-dose"));
}

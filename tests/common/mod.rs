//! Shared set-up for the UI test binaries: bundled fonts only, and a stand-in engine.
//!
//! Design choice: the harness starts from a fontconfig configuration that lists no font at all
//! (the machine a kiosk image or a bare container is) and then runs the app's own start-up
//! step, `app::fonts`, which adds the bundled font. So plain `cargo test` renders with the
//! repository's font, never with whatever the machine has installed, and every UI test run
//! proves the app starts on a machine without fonts.
#![allow(dead_code)]

use molefeed::app::dose_log::{DoseLog, LogError};
use molefeed::app::seams::{
    CalcEngine, CalcOutcome, CalcRequest, Caution, CautionLevel, SeamError, TraceLine,
};
use molefeed::log::record::{Dose, LoggedResult};
use std::sync::Once;

static FONTS: Once = Once::new();

/// Makes fontconfig see only the bundled fonts. Call first in every test.
pub fn bundled_fonts_only() {
    FONTS.call_once(|| {
        let folder = std::path::Path::new(env!("CARGO_TARGET_TMPDIR"))
            .join(format!("fonts-{}", std::process::id()));
        std::fs::create_dir_all(&folder).unwrap();
        let no_fonts = folder.join("no-fonts.conf");
        std::fs::write(
            &no_fonts,
            "<?xml version=\"1.0\"?>\n<fontconfig></fontconfig>\n",
        )
        .unwrap();
        // SAFETY: called once, before any Slint or fontconfig thread exists in this process
        // (each test binary calls this at the start of its tests).
        unsafe {
            std::env::set_var("FONTCONFIG_FILE", &no_fonts);
        }
        molefeed::app::fonts::use_bundled_font_as_fallback(&folder).unwrap();
    });
}

/// A stand-in engine for wiring tests: it reports inputs back (dose → dose, flow in m³/d →
/// "feed" in kg/d) and always raises one caution of each level. It is not chemistry; the tests
/// use it to check that what the engine returns is what the screen shows.
pub struct EchoEngine;

impl CalcEngine for EchoEngine {
    fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        Ok(CalcOutcome {
            chemical: "echo-product".into(),
            dose_mg_per_l: request.get("dose"),
            feed_kg_per_day: request.get("flow"),
            product_l_per_hour: request.get("pump-capacity"),
            product_kg_per_day: None,
            pump_setting_percent: request.get("strength"),
            extras: Vec::new(),
            // Exact: the card shows its default three figures, whatever was typed.
            figures: None,
            trace: vec![TraceLine::Result("echo: inputs reported back".into())],
            cautions: vec![
                Caution {
                    level: CautionLevel::Danger,
                    code: "test-only".into(),
                    message: "test caution: danger".into(),
                    params: vec![],
                },
                Caution {
                    level: CautionLevel::Info,
                    code: "test-only".into(),
                    message: "test caution: info".into(),
                    params: vec![],
                },
            ],
            // No engine outcome: a stand-in result is never logged.
            table: None,
            ..CalcOutcome::default()
        })
    }
}

/// Logs a dose as an operator typed it: a feed-setting entry with only its dose (no computed
/// feed, setting, trace or cautions), initials "JM". The UI and screenshot tests seed their
/// logs with these.
pub fn log_typed(
    log: &mut dyn DoseLog,
    when: &str,
    site: &str,
    point: &str,
    chemical: &str,
    dose: f64,
) -> Result<u64, LogError> {
    let dose = Dose {
        operator: "JM".into(),
        tap: point.into(),
        calculator: "feed".into(),
        mode: None,
        chemical: chemical.into(),
        product: None,
        inputs: Vec::new(),
        results: vec![LoggedResult {
            id: "dose".into(),
            value: dose,
            shown: dose.to_string(),
            unit: "mg/L".into(),
            basis: None,
            headline: true,
            range: None,
        }],
        setting: None,
        trace: Vec::new(),
        cautions: Vec::new(),
        cross_check: None,
        note: String::new(),
    };
    let at = chrono::DateTime::parse_from_rfc3339(when).expect("an RFC 3339 time");
    log.append(site, Some(at), dose)
}

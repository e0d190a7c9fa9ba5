//! The Calculators screen's controller: the calculator controller ([`CalcController`], the
//! fields, parsing and the card) with what the screen adds around it — the site's prefill
//! and preselected product, the screen's message, "log this dose", and the inputs kept across
//! a restart. Plain Rust with no Slint types, unit-tested through `state`'s tests and here.
//!
//! Design choice: `CalcScreen` dereferences to its `CalcController`, so the screen and the
//! calculator are driven through one handle (`state.calc.edit(…)`) while the card-building
//! code stays in `calc.rs`, untouched by this split. What the screen shares with the others
//! (site, language, units, initials, the data directory) it borrows from the [`Session`].
//! The card's cautions and "show the work" lines are worded here ([`caution_lines`],
//! [`trace_lines`]) through the [`Words`] seam, and so are the fields (a refusal said at its
//! field in the site's units, a reading carried over with where and when it was taken), the
//! card's message and the phone's summary bar ([`status_text`], [`summary_text`]); the bridge
//! only copies them.

use super::calc::{
    CalcController, CalcInputs, CalcView, ExtraView, FieldView, ResultView, Status, follow_ups_of,
    key,
};
use super::dose_log::{Logging, dose_of};
use super::log_screen::LogScreen;
use super::numbers::Lang;
use super::seams::{CalcEngine, CalcKind, CalcMode, Caution, TraceLine};
use super::session::{Note, Session};
use super::sites::{self, Prefill};
use super::words::Words;
use crate::engine::quantity::{Unit, UnitSystem};
use crate::log::record::Dose;
use std::ops::{Deref, DerefMut};
use std::rc::Rc;

/// Where the calculator inputs are kept between runs, in the data directory.
pub const INPUTS_FILE: &str = "calculator-inputs.json";

/// The Calculators screen.
pub struct CalcScreen {
    calc: CalcController,
    /// The screen's message (logged, or why not).
    pub note: Option<Note>,
    prefill: Prefill,
    /// Calculator variants whose product was already preselected from the site.
    preselected: Vec<(CalcKind, CalcMode)>,
}

impl Deref for CalcScreen {
    type Target = CalcController;
    fn deref(&self) -> &CalcController {
        &self.calc
    }
}

impl DerefMut for CalcScreen {
    fn deref_mut(&mut self) -> &mut CalcController {
        &mut self.calc
    }
}

impl CalcScreen {
    pub fn new(engine: Rc<dyn CalcEngine>, session: &Session) -> CalcScreen {
        CalcScreen {
            calc: CalcController::new(engine, session.lang(), session.units()),
            note: None,
            prefill: Prefill::default(),
            preselected: Vec::new(),
        }
    }

    /// Another calculator (from the Start screen or the chips): the old message goes.
    pub fn open(&mut self, kind: CalcKind) {
        self.calc.set_kind(kind);
        self.note = None;
    }

    /// The operator typed `text` in field `name`: the calculator's own, and a reading of the
    /// water taken at the session's tap now (offered to the other calculators there).
    pub fn typed(&mut self, session: &Session, name: &str, text: &str) {
        self.calc.set_tap(session.point());
        self.calc.type_in(name, text);
        self.note = None;
    }

    /// The operator cleared field `name` (a reading carried over from another calculator).
    pub fn clear_field(&mut self, name: &str) {
        self.calc.clear(name);
        self.note = None;
    }

    /// The session changed (initials typed, another tap): a message whose cause is gone goes.
    pub fn recheck_note(&mut self, session: &Session) {
        self.calc.set_tap(session.point());
        let gone = match self.note.as_ref().map(|n| n.key.as_str()) {
            Some("log-need-initials") => !session.initials().is_empty(),
            Some("log-nothing-to-log") => matches!(self.calc.view().status, Status::Ready(_)),
            _ => false,
        };
        if gone {
            self.note = None;
        }
    }

    /// The language changed: the fields are shown in it, and the app's own numbers stay the
    /// app's (see [`Prefill::through`]).
    pub fn switch_lang(&mut self, lang: Lang) {
        self.prefill.through(&mut self.calc, |c| c.set_lang(lang));
    }

    /// The unit system changed, as [`switch_lang`](Self::switch_lang).
    pub fn switch_units(&mut self, system: UnitSystem) {
        self.prefill
            .through(&mut self.calc, |c| c.set_units(system));
    }

    /// Fills the open calculator's empty inputs from the site: on the first visit to a
    /// calculator variant the site's delivered product is chosen, then its strength, SG and
    /// metering-pump capacity and the plant's typical flow fill fields the operator left empty.
    pub fn prefill_from_site(&mut self, session: &Session) {
        self.calc.set_tap(session.point());
        let site = session.site();
        self.calc.set_max_use_levels(sites::max_use_levels(site));
        self.calc.set_limits(site.limits.clone());
        self.calc.set_precisions(site.precisions());
        self.calc.set_site_facts(Some(site.facts()));
        let (kind, mode) = (self.calc.kind(), self.calc.mode());
        if !self.preselected.contains(&(kind, mode)) {
            self.preselected.push((kind, mode));
            let offered = self.calc.engine().products(kind, mode);
            if let Some(i) = offered
                .iter()
                .position(|p| site.delivered_of(&p.id).is_some())
            {
                self.calc.set_product(i);
            }
        }
        let view = self.calc.view();
        let product = view.products.get(view.product_index).map(|p| p.id.clone());
        let values =
            sites::site_values(site, session.catalog(), product.as_deref(), session.units());
        self.prefill.apply(&mut self.calc, &values, session.lang());
    }

    /// The card as the log records it ([`dose_of`]): with the engine's cautions and the
    /// site's permit warnings, as the card showed them. `None` without a dose.
    pub fn card_dose(&self, session: &Session, operator: &str, tap: &str) -> Option<Dose> {
        dose_of(
            &self.calc.view(),
            Logging {
                operator,
                tap,
                lang: session.lang(),
                units: session.units(),
            },
        )
    }

    /// "Log this dose": records the card for the session's site and tap; the screen's
    /// message says what happened.
    pub fn log_dose(&mut self, session: &Session, log: &mut LogScreen) -> Result<u64, Note> {
        let logged = self.logged(session, log);
        self.note = Some(match &logged {
            Ok(id) => Note::new(key("log-saved")).arg("id", id),
            Err(note) => note.clone(),
        });
        logged
    }

    fn logged(&self, session: &Session, log: &mut LogScreen) -> Result<u64, Note> {
        let nothing = || Note::new(key("log-nothing-to-log"));
        if !matches!(self.calc.view().status, Status::Ready(_)) {
            return Err(nothing());
        }
        if session.initials().is_empty() {
            return Err(Note::new(key("log-need-initials")));
        }
        let tap = session.point().unwrap_or("");
        let dose = self
            .card_dose(session, session.initials(), tap)
            .ok_or_else(nothing)?;
        log.record(&session.site().name, dose)
    }

    /// The operator pressed follow-up `index` of the card ([`CalcController::follow_up`]):
    /// its calculator opens with the product and values the card sends. That variant counts
    /// as preselected, so the site's delivered product does not replace the one sent (a
    /// jar-test dose of alum is a dose of alum); the site then fills what is still empty.
    pub fn open_follow_up(&mut self, index: usize, session: &Session) -> bool {
        if !self.calc.follow_up(index) {
            return false;
        }
        let variant = (self.calc.kind(), self.calc.mode());
        if !self.preselected.contains(&variant) {
            self.preselected.push(variant);
        }
        self.note = None;
        self.prefill_from_site(session);
        true
    }

    /// Puts back the calculator inputs kept by [`save_inputs`](Self::save_inputs), if any.
    pub fn restore_inputs(&mut self, session: &Session) {
        if let Some(saved) = session
            .read_file(INPUTS_FILE)
            .and_then(|t| serde_json::from_str::<CalcInputs>(&t).ok())
        {
            self.calc.restore(&saved);
        }
    }

    /// Keeps what was typed in the calculators, so a restart (an Android activity killed in
    /// the background) comes back to the same readings. A preference-like file, written whole
    /// to a temporary name and renamed, so a crash leaves the old or the new one, never half.
    pub fn save_inputs(&self, session: &Session) {
        if let Ok(text) = serde_json::to_string_pretty(&self.calc.inputs()) {
            let _ = session.write_file(INPUTS_FILE, text.as_bytes());
        }
    }
}

/// One caution as the card shows it: its level (for colour and icon), the level in a word,
/// and the sentence.
#[derive(Clone, Debug, PartialEq)]
pub struct CautionLine {
    pub level: i32,
    pub word: String,
    pub text: String,
}

/// The card's cautions — the engine's, the site's limits among them — in words, in the
/// engine's order (what the operator must act on first: limits, the cross-check, the process,
/// then handling; `dosing::caution::finish`). A caution without a translation shows the
/// engine's English message; a parameter naming an input field (`field-…`) is shown as the
/// field's label. Two cautions that say the same sentence (a product's hazard and the
/// calculator's own) are said once, where the first stood, at the worse level.
pub fn caution_lines(cautions: &[Caution], words: &dyn Words) -> Vec<CautionLine> {
    let mut shown: Vec<CautionLine> = Vec::new();
    for c in cautions {
        // Engine caution keys are translation keys as they stand.
        let text = if words.has(&c.code) {
            let args: Vec<(&str, String)> = c
                .params
                .iter()
                .map(|(k, v)| {
                    let v = if v.starts_with("field-") && words.has(v) {
                        words.get(v)
                    } else {
                        v.clone()
                    };
                    (k.as_str(), v)
                })
                .collect();
            words.get_args(&c.code, &args)
        } else {
            c.message.clone()
        };
        let level = c.level as i32;
        let word = words.get(&format!("caution-level-{}", c.level.code()));
        match shown.iter_mut().find(|l| l.text == text) {
            Some(l) if l.level < level => (l.level, l.word) = (level, word),
            Some(_) => {}
            None => shown.push(CautionLine { level, word, text }),
        }
    }
    shown
}

/// One "show the work" line as the card shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct TraceText {
    pub heading: bool,
    pub text: String,
    /// Where a factor comes from, in words (empty for most lines).
    pub origin: String,
}

/// "Show the work" in the current language: headings (`trace-<label>`, else the label as
/// the engine wrote it) and factor origins (`origin-<code>`) are translated; the conversion
/// itself (numbers, units, formulas) reads the same in any language.
pub fn trace_lines(trace: &[TraceLine], words: &dyn Words) -> Vec<TraceText> {
    trace
        .iter()
        .map(|line| match line {
            TraceLine::Heading(label) => {
                let key = format!("trace-{label}");
                TraceText {
                    heading: true,
                    text: if words.has(&key) {
                        words.get(&key)
                    } else {
                        label.clone()
                    },
                    origin: String::new(),
                }
            }
            TraceLine::Step { text, origin } => TraceText {
                heading: false,
                text: text.clone(),
                origin: origin
                    .as_ref()
                    .map(|o| {
                        words.get_args(
                            &format!("origin-{}", o.code),
                            &[("detail", o.detail.clone())],
                        )
                    })
                    .unwrap_or_default(),
            },
            TraceLine::Result(text) => TraceText {
                heading: false,
                text: text.clone(),
                origin: String::new(),
            },
        })
        .collect()
}

/// Bases said in words of their own (`basis-<code>`, spaces as dashes); any other basis is a
/// compound, said "as <compound>" (`basis-as`).
pub const BASIS_WORDS: [&str; 9] = [
    "trade",
    "weight",
    "as-al2o3",
    "available-chlorine",
    "purity",
    "product",
    "dry-solids",
    "water",
    "alkali",
];

/// An input row in words: its label, its unit with the basis the value is on, its text, its
/// problem, and where a value carried over from another calculator was taken.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldText {
    pub label: String,
    pub unit: String,
    pub text: String,
    pub error: String,
    /// "From Softening, 10:42 UTC"; empty for the calculator's own value.
    pub origin: String,
}

/// The text inputs of the calculator shown (a jar-test stock's formula) as input rows: label
/// `field-<name>`, beside the entry what the text is (`text-input-<kind>`), the text as typed.
/// From the engine's table, so no calculator is named here.
pub fn text_field_texts(calc: &CalcController, words: &dyn Words) -> Vec<FieldText> {
    calc.text_inputs()
        .into_iter()
        .map(|t| FieldText {
            label: words.get(&format!("field-{}", t.name)),
            unit: words.get(&format!("text-input-{}", t.kind)),
            text: calc.text_input(t.name).to_string(),
            error: String::new(),
            origin: String::new(),
        })
        .collect()
}

/// The card's follow-up buttons in words: "Use this result in Coagulation" (the screen it
/// opens), one per follow-up the engine offers, in its order (see
/// [`follow_ups_of`]), read off the view the card was drawn from.
pub fn follow_up_texts(view: &CalcView, words: &dyn Words) -> Vec<String> {
    follow_ups_of(view)
        .into_iter()
        .map(|(kind, _)| {
            let screen = words.get(&format!("calc-{}", kind.code()));
            words.get_args(key("calc-follow-up"), &[("calculator", screen)])
        })
        .collect()
}

/// What a value of `unit` on `basis` is, in words: "% trade", "mg/L as Cl2", "mL of product".
/// A unit that names its basis already ("mg/L as CaCO₃") is not said twice.
pub fn unit_with_basis(unit: Unit, basis: Option<&str>, words: &dyn Words) -> String {
    let unit_text = words.get(&format!("unit-{}", unit.code()));
    let basis = match basis {
        None => return unit_text,
        Some("CaCO3") if unit == Unit::MgPerLAsCaCO3 => return unit_text,
        Some(b) => b,
    };
    let code = basis.replace(' ', "-");
    let basis_text = if BASIS_WORDS.contains(&code.as_str()) {
        words.get(&format!("basis-{code}"))
    } else {
        words.get_args(key("basis-as"), &[("compound", basis.to_string())])
    };
    if unit_text.is_empty() {
        basis_text
    } else {
        format!("{unit_text} {basis_text}")
    }
}

/// An input row in words.
pub fn field_text(f: &FieldView, words: &dyn Words) -> FieldText {
    let label = words.get(&format!("field-{}", f.name));
    let error = match (f.error, &f.refusal) {
        (Some(k), _) => words.get(k),
        (None, Some(e)) => refusal_text(e, f, words),
        (None, None) => String::new(),
    };
    FieldText {
        label: if f.optional {
            format!("{label} {}", words.get(key("field-optional")))
        } else {
            label
        },
        unit: unit_with_basis(f.unit, f.basis, words),
        text: f.text.clone(),
        error,
        origin: f
            .carried
            .as_ref()
            .map(|c| {
                words.get_args(
                    key("calc-carried"),
                    &[
                        ("calculator", variant_name(c.from, words)),
                        ("time", c.at.format("%H:%M").to_string()),
                    ],
                )
            })
            .unwrap_or_default(),
    }
}

/// A calculator variant's name: its screen's, or the variant's own where the screen has several.
pub fn variant_name(mode: CalcMode, words: &dyn Words) -> String {
    let kind = CalcKind::all()
        .into_iter()
        .find(|k| k.modes().contains(&mode));
    match kind {
        Some(k) if k.modes().len() == 1 => words.get(&format!("calc-{}", k.code())),
        _ => words.get(&format!("mode-{}", mode.code())),
    }
}

/// A number the engine reported in SI, in the field's unit to sensible figures: four at most,
/// no trailing zeros, and a power of ten for what no plant has (1e11 MGD reads "1.00×10¹¹").
fn sensible(si: f64, unit: Unit, lang: Lang) -> String {
    let v = unit.from_si(si);
    if v != 0.0 && (v.abs() >= 1e7 || v.abs() < 1e-4) {
        let text = format!("{v:.2e}");
        let (mantissa, exponent) = text.split_once('e').unwrap_or((&text, "0"));
        let sup: String = exponent
            .chars()
            .map(|ch| match ch {
                '-' => '⁻',
                d => "⁰¹²³⁴⁵⁶⁷⁸⁹"
                    .chars()
                    .nth(d.to_digit(10).unwrap_or(0) as usize)
                    .unwrap_or(d),
            })
            .collect();
        let mark = lang.decimal_mark().to_string();
        return format!("{}×10{sup}", mantissa.replace('.', &mark));
    }
    sites::show(v, lang)
}

/// The engine's refusal of field `f`'s value, said at the field: named by the field's label,
/// its numbers in the field's unit ("Flow 1.00e11 MGD is outside 0–264 000 MGD"), never the
/// engine's SI figures with fifteen digits.
pub fn refusal_text(e: &crate::engine::Error, f: &FieldView, words: &dyn Words) -> String {
    let key = match e.reason() {
        Some(reason) => format!("error-reason-{reason}"),
        None => format!("error-{}", e.kind().code()),
    };
    if !words.has(&key) {
        return words.error(e);
    }
    let lang = words.lang();
    let label = words.get(&format!("field-{}", f.name));
    let unit_text = words.get(&format!("unit-{}", f.unit.code()));
    let mut args: Vec<(&str, String)> = e
        .params()
        .iter()
        .map(|(name, value)| {
            let value = match *name {
                "quantity" | "input" => label.clone(),
                "unit" if unit_text.is_empty() => String::new(),
                "unit" => format!(" {unit_text}"),
                "value" | "min" | "max" | "smallest" | "largest" | "low" | "high" => value
                    .parse::<f64>()
                    .map_or_else(|_| value.clone(), |v| sensible(v, f.unit, lang)),
                _ => value.clone(),
            };
            (*name, value)
        })
        .collect();
    args.push(("message", e.message().to_string()));
    let text = words.get_args(&key, &args);
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => text,
    }
}

/// The card's message when it shows no numbers, and under the numbers what is still empty.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct StatusText {
    /// Why there are no numbers (empty when there are).
    pub message: String,
    /// An error (a refusal, a value that is no number), shown as one; else information.
    pub error: bool,
    /// With numbers: the fields only some results wait for, by name (the setting's scale).
    pub partial: String,
}

/// The card's message in words: the fields still missing by name, a refusal in the field's
/// units, or what is not a number.
pub fn status_text(view: &CalcView, words: &dyn Words) -> StatusText {
    let names = |fields: Vec<&FieldView>| {
        fields
            .iter()
            .map(|f| words.get(&format!("field-{}", f.name)))
            .collect::<Vec<_>>()
            .join(", ")
    };
    match &view.status {
        Status::Ready(_) => {
            let missing = view.missing();
            StatusText {
                partial: if missing.is_empty() {
                    String::new()
                } else {
                    words.get_args(key("calc-partial"), &[("fields", names(missing))])
                },
                ..StatusText::default()
            }
        }
        Status::Incomplete => {
            let missing = view.missing();
            StatusText {
                message: if missing.is_empty() {
                    words.get(key("calc-incomplete"))
                } else {
                    words.get_args(key("calc-missing"), &[("fields", names(missing))])
                },
                ..StatusText::default()
            }
        }
        Status::Refused(e) => StatusText {
            message: match view.fields.iter().find(|f| f.refusal.is_some()) {
                Some(f) => {
                    // Named by its field, once.
                    let label = words.get(&format!("field-{}", f.name));
                    let text = refusal_text(e, f, words);
                    if text.contains(&label) {
                        text
                    } else {
                        format!("{label}: {text}")
                    }
                }
                None => words.error(e),
            },
            error: true,
            ..StatusText::default()
        },
        other => StatusText {
            message: other
                .message_key()
                .map(|k| words.get(&k))
                .unwrap_or_default(),
            error: matches!(other, Status::Invalid),
            ..StatusText::default()
        },
    }
}

/// The phone's summary bar, in view while the fields scroll: a cross-check's deviation, the
/// dose and the setting; or, without numbers, the card's message.
pub fn summary_text(view: &CalcView, words: &dyn Words) -> String {
    let Status::Ready(r) = &view.status else {
        return status_text(view, words).message;
    };
    let card = card_text(r, words);
    let mut parts: Vec<String> = card
        .leads
        .iter()
        .map(|l| format!("{} {} {}", l.label, l.value, l.unit))
        .collect();
    for big in [&card.bigs[0], &card.bigs[3]] {
        if big.value != "—" {
            parts.push(format!("{} {} {}", big.caption, big.value, big.unit));
        }
    }
    parts.join(" · ")
}

/// A result listed by name on the card, in words.
#[derive(Clone, Debug, PartialEq)]
pub struct ResultLine {
    pub label: String,
    pub value: String,
    pub unit: String,
    /// Empty where the range adds nothing.
    pub range: String,
}

/// One big number of the card, in words.
#[derive(Clone, Debug, PartialEq)]
pub struct BigText {
    pub caption: String,
    pub value: String,
    pub unit: String,
    /// Empty where the range adds nothing.
    pub range: String,
}

/// The result card in words: what the bridge copies into the adapter, nothing left to decide.
#[derive(Clone, Debug, PartialEq)]
pub struct CardText {
    /// The product's name.
    pub chemical: String,
    /// Dose, feed, product and setting, in that order.
    pub bigs: [BigText; 4],
    /// Why no product volume is shown (a product fed by mass); empty otherwise.
    pub no_volume_note: String,
    /// Headlines without a big place (a cross-check's deviation), shown first.
    pub leads: Vec<ResultLine>,
    pub extras: Vec<ResultLine>,
    pub figures_note: String,
}

/// A key's translation, or the text itself where it is no key (an engine's name).
fn named(words: &dyn Words, name: &str) -> String {
    if words.has(name) {
        words.get(name)
    } else {
        name.to_string()
    }
}

/// The card of `r` in words.
pub fn card_text(r: &ResultView, words: &dyn Words) -> CardText {
    let unit = |u: Unit| words.get(&format!("unit-{}", u.code()));
    let chemical = named(words, &r.chemical);
    let big = |caption: &str, value: &str, unit_text: String, range: &Option<String>| BigText {
        caption: words.get(caption),
        value: value.to_string(),
        unit: unit_text,
        range: range.clone().unwrap_or_default(),
    };
    let line = |e: &ExtraView| ResultLine {
        label: words.get(&format!("result-{}", e.key)),
        value: e.value.clone(),
        unit: unit(e.unit),
        range: e.range.clone().unwrap_or_default(),
    };
    let figures = r.figures.to_string();
    CardText {
        bigs: [
            big(&r.dose_caption, &r.dose, unit(Unit::MgPerL), &r.ranges[0]),
            big(key("result-feed"), &r.feed, unit(r.feed_unit), &r.ranges[1]),
            big(
                r.product_caption,
                &r.product,
                unit(r.product_unit),
                &r.ranges[2],
            ),
            big(r.pump_caption, &r.pump, unit(Unit::Percent), &r.ranges[3]),
        ],
        no_volume_note: r
            .no_volume_note
            .map(|k| words.get_args(k, &[("product", chemical.clone())]))
            .unwrap_or_default(),
        chemical,
        leads: r.extras.iter().filter(|e| e.lead).map(line).collect(),
        extras: r.extras.iter().filter(|e| !e.lead).map(line).collect(),
        figures_note: match r.limiting {
            Some(field) => words.get_args(
                key("calc-figures-limited"),
                &[
                    ("figures", figures),
                    ("field", words.get(&format!("field-{field}"))),
                ],
            ),
            None => words.get_args(key("calc-figures"), &[("figures", figures)]),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::seams::{CautionLevel, StepOrigin};
    use crate::app::words::Dictionary;

    const WORDS: Dictionary = Dictionary(&[
        ("caution-level-info", "Note"),
        ("caution-level-warning", "Warning"),
        ("caution-level-danger", "Danger"),
        ("hazard-corrosive", "Corrosive: wear eye protection."),
        (
            "site-limit-above",
            "{ $field } is above { $max } ({ $source }).",
        ),
        ("field-target-residual", "Residual target"),
        ("trace-feed", "Feed rate"),
        ("origin-density", "density of { $detail }"),
    ]);

    fn caution(level: CautionLevel, code: &str, params: &[(&str, &str)]) -> Caution {
        Caution {
            level,
            code: code.into(),
            message: format!("English message of {code}"),
            params: params
                .iter()
                .map(|(k, v)| (k.to_string(), v.to_string()))
                .collect(),
        }
    }

    /// Expected texts written by hand from the dictionary above.
    #[test]
    fn cautions_are_worded_in_the_engines_order_and_said_once() {
        use CautionLevel::*;
        let check = |cautions: &[Caution], want: &[(i32, &str, &str)]| {
            let got = caution_lines(cautions, &WORDS);
            let got: Vec<(i32, &str, &str)> = got
                .iter()
                .map(|l| (l.level, l.word.as_str(), l.text.as_str()))
                .collect();
            assert_eq!(got, want, "{cautions:?}");
        };
        let corrosive = "Corrosive: wear eye protection.";
        // In the engine's order (it puts what must be acted on first, not the most severe
        // handling box); an untranslated code shows the engine's message.
        check(
            &[
                caution(Info, "new-code", &[]),
                caution(Danger, "hazard-corrosive", &[]),
            ],
            &[
                (0, "Note", "English message of new-code"),
                (2, "Danger", corrosive),
            ],
        );
        // The same sentence twice (product hazard and calculator): once, at the worse level.
        check(
            &[
                caution(Warning, "hazard-corrosive", &[]),
                caution(Danger, "hazard-corrosive", &[]),
            ],
            &[(2, "Danger", corrosive)],
        );
        // A field parameter is shown as the field's label; other values as they are.
        check(
            &[caution(
                Warning,
                "site-limit-above",
                &[
                    ("field", "field-target-residual"),
                    ("max", "4"),
                    ("source", "Plant permit"),
                ],
            )],
            &[(1, "Warning", "Residual target is above 4 (Plant permit).")],
        );
        check(&[], &[]);
    }

    #[test]
    fn show_the_work_translates_headings_and_origins_only() {
        let trace = [
            TraceLine::Heading("feed".into()),
            TraceLine::Heading("untranslated-label".into()),
            TraceLine::Step {
                text: "2.4 MGD × 1.5 mg/L".into(),
                origin: Some(StepOrigin {
                    code: "density",
                    detail: "NaOCl 12.5 %".into(),
                }),
            },
            TraceLine::Result("= 30.0 lb/d".into()),
        ];
        let got: Vec<(bool, String, String)> = trace_lines(&trace, &WORDS)
            .into_iter()
            .map(|t| (t.heading, t.text, t.origin))
            .collect();
        let line = |h: bool, t: &str, o: &str| (h, t.to_string(), o.to_string());
        assert_eq!(
            got,
            [
                line(true, "Feed rate", ""),
                line(true, "untranslated-label", ""),
                line(false, "2.4 MGD × 1.5 mg/L", "density of NaOCl 12.5 %"),
                line(false, "= 30.0 lb/d", ""),
            ]
        );
    }

    /// The card in words: captions by their keys, units by theirs, the range beside each
    /// number as the view gave it, the lead lines apart; expected texts written by hand.
    #[test]
    fn the_card_is_worded_with_its_ranges_and_leads() {
        const CARD: Dictionary = Dictionary(&[
            ("result-actual-dose", "Actual dose"),
            ("result-feed", "Feed"),
            ("result-product", "Product"),
            ("result-suggested-pump-setting", "Setting for the target"),
            ("result-deviation", "Deviation"),
            ("result-feed-mass-rate", "Feed mass"),
            ("unit-mg-per-l", "mg/L"),
            ("unit-kg-per-day", "kg/d"),
            ("unit-l-per-hour", "L/h"),
            ("unit-percent", "%"),
            ("product-hypo", "Hypochlorite"),
            ("calc-figures", "Shown to { $figures } figures."),
        ]);
        let extra = |key: &str, value: &str, range: Option<&str>, lead: bool| ExtraView {
            key: key.into(),
            value: value.into(),
            unit: Unit::Percent,
            range: range.map(String::from),
            lead,
        };
        let view = ResultView {
            chemical: "product-hypo".into(),
            dose_caption: "result-actual-dose".into(),
            dose: "2.77".into(),
            feed: "25.2".into(),
            feed_unit: Unit::KgPerDay,
            product: "8.40".into(),
            product_unit: Unit::LitresPerHour,
            product_caption: "result-product",
            pump: "26.3".into(),
            pump_caption: "result-suggested-pump-setting",
            no_volume_note: None,
            ranges: [
                Some("2.65–2.89".into()),
                None,
                Some("8.21–8.59".into()),
                Some("25.2–27.5".into()),
            ],
            extras: vec![
                extra("deviation", "-7.69", Some("-11.6 – -3.71"), true),
                extra("feed-mass-rate", "1.00", None, false),
            ],
            figures: 3,
            limiting: None,
            trace: Vec::new(),
            cautions: Vec::new(),
            outcome: Default::default(),
        };
        let card = card_text(&view, &CARD);
        assert_eq!(card.chemical, "Hypochlorite");
        let bigs: Vec<_> = card
            .bigs
            .iter()
            .map(|b| {
                (
                    b.caption.as_str(),
                    b.value.as_str(),
                    b.unit.as_str(),
                    b.range.as_str(),
                )
            })
            .collect();
        assert_eq!(
            bigs,
            [
                ("Actual dose", "2.77", "mg/L", "2.65–2.89"),
                ("Feed", "25.2", "kg/d", ""),
                ("Product", "8.40", "L/h", "8.21–8.59"),
                ("Setting for the target", "26.3", "%", "25.2–27.5"),
            ]
        );
        assert_eq!(
            card.leads,
            [ResultLine {
                label: "Deviation".into(),
                value: "-7.69".into(),
                unit: "%".into(),
                range: "-11.6 – -3.71".into(),
            }]
        );
        assert_eq!(card.extras.len(), 1);
        assert_eq!(card.extras[0].label, "Feed mass");
        assert_eq!(card.figures_note, "Shown to 3 figures.");
        assert_eq!(card.no_volume_note, "");
    }

    fn flow_field(text: &str) -> FieldView {
        FieldView {
            name: "flow",
            optional: false,
            unit: Unit::Mgd,
            basis: None,
            text: text.into(),
            error: None,
            refusal: None,
            only_for: &[],
            missing: false,
            carried: None,
        }
    }

    /// A refusal at its field speaks the field's unit with sensible figures: the engine's
    /// 378541174614.58826 m³/d is 1.00×10⁸ MGD (÷ 3785.411784 m³/d per MGD, exact), its
    /// 1e9 m³/d limit 264 172 MGD, shown to four figures; expected texts written by hand.
    #[test]
    fn a_refusal_is_said_at_its_field_in_its_unit() {
        const ERRORS: Dictionary = Dictionary(&[
            ("field-flow", "Flow"),
            ("unit-mgd", "MGD"),
            (
                "error-out-of-range",
                "{ $quantity } { $value }{ $unit } is outside { $min }–{ $max }{ $unit }.",
            ),
            (
                "error-reason-not-positive",
                "{ $quantity } must be greater than zero.",
            ),
        ]);
        let e = crate::engine::Error::new(crate::engine::ErrorKind::OutOfRange, "x")
            .with("quantity", "flow")
            .with("value", 378_541_174_614.588_26)
            .with("min", 0.0)
            .with("max", 1e9)
            .with("unit", "m³/d");
        let mut f = flow_field("100000000");
        f.refusal = Some(e);
        assert_eq!(
            field_text(&f, &ERRORS).error,
            "Flow 1.00×10⁸ MGD is outside 0–264200 MGD."
        );
        // A check that names its quantity its own way ("strength" for a purity) is said with
        // the field's name.
        let e = crate::engine::Error::new(crate::engine::ErrorKind::OutOfRange, "x")
            .because("not-positive")
            .with("quantity", "strength")
            .with("value", -1.0);
        f.refusal = Some(e);
        assert_eq!(
            field_text(&f, &ERRORS).error,
            "Flow must be greater than zero."
        );
    }

    /// A reading carried over says where and when it was taken; the card names what is
    /// missing, and a refusal reads as an error.
    #[test]
    fn carried_readings_and_missing_fields_are_said() {
        const SAID: Dictionary = Dictionary(&[
            ("field-flow", "Flow"),
            ("field-dose", "Dose"),
            ("calc-softening", "Softening"),
            ("calc-carried", "From { $calculator }, { $time } UTC"),
            ("calc-missing", "Still needed: { $fields }."),
        ]);
        let mut f = flow_field("2.4");
        f.carried = Some(super::super::calc::Carried {
            from: CalcMode::of("softening"),
            at: chrono::DateTime::parse_from_rfc3339("2026-12-03T10:42:00Z")
                .unwrap()
                .with_timezone(&chrono::Utc),
        });
        assert_eq!(field_text(&f, &SAID).origin, "From Softening, 10:42 UTC");
        let mut flow = flow_field("");
        flow.missing = true;
        let mut dose = flow_field("");
        dose.name = "dose";
        dose.missing = true;
        let view = CalcView {
            kind: CalcKind::of("feed"),
            mode: CalcMode::of("feed"),
            products: Vec::new(),
            product_index: 0,
            fields: vec![flow, dose, flow_field("1")],
            status: Status::Incomplete,
        };
        let said = status_text(&view, &SAID);
        assert_eq!(said.message, "Still needed: Flow, Dose.");
        assert!(!said.error);
        assert_eq!(summary_text(&view, &SAID), said.message);
        let refused = CalcView {
            status: Status::Refused(crate::engine::Error::new(
                crate::engine::ErrorKind::InvalidInput,
                "no",
            )),
            ..view
        };
        assert!(status_text(&refused, &SAID).error);
    }

    /// Every strength, dose and concentration says its basis beside its unit; a unit that
    /// names its basis is not doubled. Expected texts written by hand from the dictionary.
    #[test]
    fn a_fields_unit_says_its_basis() {
        const BASES: Dictionary = Dictionary(&[
            ("unit-percent", "%"),
            ("unit-mg-per-l", "mg/L"),
            ("unit-mg-per-l-caco3", "mg/L as CaCO₃"),
            ("unit-ml", "mL"),
            ("unit-ratio", ""),
            ("basis-trade", "trade"),
            ("basis-product", "of product"),
            ("basis-as", "as { $compound }"),
        ]);
        fn check(unit: Unit, basis: Option<&str>, expected: &str) {
            assert_eq!(unit_with_basis(unit, basis, &BASES), expected, "{basis:?}");
        }
        check(Unit::Percent, Some("trade"), "% trade");
        check(Unit::MgPerL, Some("Cl2"), "mg/L as Cl2");
        check(Unit::MgPerLAsCaCO3, Some("CaCO3"), "mg/L as CaCO₃");
        check(Unit::Millilitres, Some("product"), "mL of product");
        check(Unit::MgPerL, None, "mg/L");
        check(Unit::Ratio, None, "");
    }
}

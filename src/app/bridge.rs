//! The bridge between the Rust controllers and the Slint adapters.
//!
//! Design choice: one-way data flow. Slint callbacks call a named [`AppState`] method, then
//! the bridge re-reads the state and pushes translated strings and models into the globals.
//! The input-field model is kept alive between keystrokes and only its rows are updated, so
//! typing never loses focus; it is rebuilt when the calculator, units or language change.

use super::RunOptions;
use super::calc::{CalcController, CalcView, FieldView, Status, key};
use super::calc_screen::{
    ResultLine, card_text, caution_lines, field_text, follow_up_texts, status_text, summary_text,
    text_field_texts, trace_lines,
};
use super::dose_log::ExportFormat;
use super::dose_log::{DoseLog, connected_log};
use super::i18n::Texts;
use super::log_screen::Chip;
use super::numbers::Lang;
use super::seams::{CalcEngine, CalcKind, connected_engine};
use super::site_editor::{
    PrecisionForm, ProductFields, SiteLine, instrument_choices, limit_parameters, precision_lines,
};
use super::sites::{self, LimitForm, ProductForm, PumpForm};
use super::state::{AppState, DateRange, LogEdit, Note, PlotView, Screen, utc_today};
use super::ui::*;
use crate::engine::precision::Instrument;
use crate::engine::quantity::{Unit, UnitSystem};
use slint::{ComponentHandle, Model, ModelRc, SharedString, VecModel};
use std::cell::RefCell;
use std::path::PathBuf;
use std::rc::Rc;

#[path = "bridge_stock.rs"]
mod stock;

/// What the app is connected to. Tests build their own; platforms use [`Deps::from_options`].
pub struct Deps {
    pub engine: Rc<dyn CalcEngine>,
    pub log: Box<dyn DoseLog>,
    pub data_dir: Option<PathBuf>,
    pub lang: Option<Lang>,
    pub quit_on_root_back: bool,
}

impl Deps {
    /// The real engine and log seams, with the platform's options.
    pub fn from_options(options: &RunOptions) -> Deps {
        Deps {
            engine: connected_engine(),
            log: connected_log(options.data_dir.as_deref()),
            data_dir: options.data_dir.clone(),
            lang: options.lang,
            quit_on_root_back: options.quit_on_root_back,
        }
    }
}

/// Keeps the controllers alive for as long as the window lives; tests read the state.
pub struct AppHandle {
    pub state: Rc<RefCell<AppState>>,
    inner: Rc<Inner>,
}

impl AppHandle {
    /// Pushes the whole state into the window again (after a test changed it directly).
    pub fn refresh(&self) {
        self.inner.refresh_all();
    }
}

struct Inner {
    window: slint::Weak<AppWindow>,
    state: Rc<RefCell<AppState>>,
    texts: RefCell<Texts>,
    fields: Rc<VecModel<FieldRow>>,
    epoch: RefCell<i32>,
    quit_on_root_back: bool,
    /// Writes the calculator inputs a moment after the last change (see `keep_inputs_soon`).
    keep_inputs: slint::Timer,
    this: RefCell<std::rc::Weak<Inner>>,
}

fn s(text: impl AsRef<str>) -> SharedString {
    SharedString::from(text.as_ref())
}

/// An axis's values as the plot view takes them.
fn ticks(list: &[super::plots::Tick]) -> ModelRc<PlotTick> {
    model(
        list.iter()
            .map(|t| PlotTick {
                label: s(&t.label),
                at: t.at as f32,
            })
            .collect(),
    )
}

fn model<T: Clone + 'static>(v: Vec<T>) -> ModelRc<T> {
    ModelRc::new(VecModel::from(v))
}

/// Connects `window` to fresh controllers; call once per window.
pub fn attach(window: &AppWindow, deps: Deps) -> AppHandle {
    let state = Rc::new(RefCell::new(AppState::new(
        deps.engine,
        deps.log,
        deps.data_dir,
        deps.lang,
    )));
    let lang = state.borrow().lang();
    let inner = Rc::new(Inner {
        window: window.as_weak(),
        state: state.clone(),
        texts: RefCell::new(Texts::new(lang)),
        fields: Rc::new(VecModel::default()),
        epoch: RefCell::new(0),
        quit_on_root_back: deps.quit_on_root_back,
        keep_inputs: slint::Timer::default(),
        this: RefCell::new(std::rc::Weak::new()),
    });
    *inner.this.borrow_mut() = Rc::downgrade(&inner);
    state.borrow_mut().restore_inputs();

    let tr = window.global::<Tr>();
    let weak_inner = Rc::downgrade(&inner);
    tr.on_lookup(move |key, _epoch| {
        weak_inner
            .upgrade()
            .map(|i| s(i.texts.borrow().get(&key)))
            .unwrap_or_default()
    });

    let calc = window.global::<CalcAdapter>();
    calc.set_fields(ModelRc::from(inner.fields.clone()));

    wire(window, &inner);
    window
        .global::<AboutAdapter>()
        .set_version(s(env!("CARGO_PKG_VERSION")));
    inner.refresh_all();
    AppHandle { state, inner }
}

/// Registers every callback. Each one calls the state, then refreshes what it changed.
fn wire(window: &AppWindow, inner: &Rc<Inner>) {
    let on = |f: fn(&Inner, i32)| {
        let weak = Rc::downgrade(inner);
        move |i: i32| {
            if let Some(inner) = weak.upgrade() {
                f(&inner, i);
            }
        }
    };
    let on_text = |f: fn(&Inner, &str)| {
        let weak = Rc::downgrade(inner);
        move |t: SharedString| {
            if let Some(inner) = weak.upgrade() {
                f(&inner, t.as_str());
            }
        }
    };
    let on_unit = |f: fn(&Inner)| {
        let weak = Rc::downgrade(inner);
        move || {
            if let Some(inner) = weak.upgrade() {
                f(&inner);
            }
        }
    };
    let on_index_flag = |f: fn(&Inner, i32, bool)| {
        let weak = Rc::downgrade(inner);
        move |i: i32, flag: bool| {
            if let Some(inner) = weak.upgrade() {
                f(&inner, i, flag);
            }
        }
    };

    let nav = window.global::<Nav>();
    nav.on_go(on(|i, n| {
        if let Some(screen) = Screen::from_index(n) {
            i.state.borrow_mut().navigate(screen);
            i.refresh_all();
        }
    }));
    nav.on_back(on_unit(|i| {
        // On a phone an open log entry covers the list: back closes it first, as a user of
        // a phone expects, before it leaves the screen.
        let window = i.window();
        let log = window.global::<LogAdapter>();
        if i.state.borrow().screen() == Screen::Log && log.get_compact_detail() {
            log.set_compact_detail(false);
            return;
        }
        let moved = i.state.borrow_mut().back();
        if !moved && i.quit_on_root_back {
            let _ = slint::quit_event_loop();
        }
        i.refresh_all();
    }));

    let start = window.global::<StartAdapter>();
    start.on_pick_site(on(|i, n| {
        i.state.borrow_mut().pick_site(n.max(0) as usize);
        i.refresh_all();
    }));
    start.on_pick_point(on(|i, n| {
        i.state.borrow_mut().pick_point(n.max(0) as usize);
        i.refresh_all();
    }));
    start.on_open_calculator(on(|i, n| {
        if let Some(kind) = CalcKind::all().get(n.max(0) as usize) {
            i.state.borrow_mut().open_calculator(*kind);
            i.refresh_all();
        }
    }));

    let path = window.global::<PathAdapter>();
    let weak = Rc::downgrade(inner);
    path.on_edit_water(move |name, text| {
        if let Some(i) = weak.upgrade() {
            i.state.borrow_mut().path.edit_water(&name, &text);
            i.refresh_path();
        }
    });
    let weak = Rc::downgrade(inner);
    path.on_edit_dose(move |point, product, text| {
        if let Some(i) = weak.upgrade() {
            i.state.borrow_mut().path.edit_dose(&point, &product, &text);
            i.refresh_path();
        }
    });
    path.on_open_point(on(|i, n| {
        let texts = i.texts.borrow();
        let opened = i
            .state
            .borrow_mut()
            .open_path_point(n.max(0) as usize, &*texts);
        drop(texts);
        if opened {
            i.refresh_all();
        }
    }));
    wire_path_two(&path, inner);

    let calc = window.global::<CalcAdapter>();
    calc.on_pick_kind(on(|i, n| {
        if let Some(kind) = CalcKind::all().get(n.max(0) as usize) {
            let mut st = i.state.borrow_mut();
            st.calc.open(*kind);
            st.prefill_from_site();
        }
        i.refresh_calc(true);
    }));
    calc.on_pick_product(on(|i, n| {
        {
            let mut st = i.state.borrow_mut();
            st.calc.set_product(n.max(0) as usize);
            st.calc.note = None;
            st.prefill_from_site();
        }
        i.refresh_calc(false);
    }));
    calc.on_pick_mode(on(|i, n| {
        {
            let mut st = i.state.borrow_mut();
            let kind = st.calc.kind();
            if let Some(mode) = kind.modes().get(n.max(0) as usize) {
                st.calc.set_mode(*mode);
            }
            st.calc.note = None;
            st.prefill_from_site();
        }
        i.refresh_calc(true);
        i.keep_inputs_soon();
    }));
    let weak = Rc::downgrade(inner);
    calc.on_edited(move |index, text| {
        let Some(i) = weak.upgrade() else { return };
        i.state
            .borrow_mut()
            .type_in_field(index.max(0) as usize, text.as_str());
        i.refresh_calc(false);
        i.keep_inputs_soon();
    });
    calc.on_clear(on(|i, n| {
        i.state.borrow_mut().clear_field(n.max(0) as usize);
        i.refresh_calc(true);
        i.keep_inputs_soon();
    }));
    calc.on_pick_tap(on(|i, n| {
        i.state.borrow_mut().pick_point(n.max(0) as usize);
        i.refresh_all();
    }));
    calc.on_log_dose(on_unit(|i| {
        let _ = i.state.borrow_mut().log_current_dose();
        i.refresh_all();
    }));
    // The calculator's text inputs and its card's follow-ups (see `refresh_calc_more`).
    let weak = Rc::downgrade(inner);
    calc.on_text_edited(move |index, text| {
        let Some(i) = weak.upgrade() else { return };
        {
            let mut st = i.state.borrow_mut();
            let name = st
                .calc
                .text_inputs()
                .get(index.max(0) as usize)
                .map(|t| t.name);
            if let Some(name) = name {
                st.calc.edit_text_input(name, text.as_str());
            }
        }
        i.refresh_calc(false);
    });
    calc.on_follow_up(on(|i, n| {
        let opened = {
            let st = &mut *i.state.borrow_mut();
            st.calc.open_follow_up(n.max(0) as usize, &st.session)
        };
        if opened {
            i.refresh_calc(true);
            i.keep_inputs_soon();
        }
    }));

    let log = window.global::<LogAdapter>();
    log.on_filter_edited(on_text(|i, t| {
        i.state.borrow_mut().log.filter.text = t.to_string();
        i.refresh_log();
    }));
    log.on_select(on(|i, id| {
        i.state.borrow_mut().log.select(id.max(0) as u64);
        i.refresh_log();
        i.refresh_plots();
    }));
    log.on_pick_range(on(|i, n| {
        let range = DateRange::ALL.get(n.max(0) as usize).copied();
        i.state
            .borrow_mut()
            .log
            .pick_range(range.unwrap_or_default(), utc_today());
        i.refresh_log();
    }));
    log.on_dates_edited(on_unit(|i| {
        let window = i.window();
        let adapter = window.global::<LogAdapter>();
        let (from, to) = (adapter.get_date_from(), adapter.get_date_to());
        i.state.borrow_mut().log.edit_dates(&from, &to);
        i.refresh_log();
    }));
    // Choice 0 is "any"; the others are the values present in the log, in the bridge's order.
    log.on_pick_point(on(|i, n| {
        i.state.borrow_mut().log.pick_point(n);
        i.refresh_log();
    }));
    log.on_pick_chemical(on(|i, n| {
        i.state.borrow_mut().log.pick_chemical(n);
        i.refresh_log();
    }));
    log.on_pick_format(on(|i, n| {
        let format = ExportFormat::ALL.get(n.max(0) as usize).copied();
        i.state.borrow_mut().log.format = format.unwrap_or_default();
        i.refresh_log();
    }));
    log.on_open_correct(on_unit(|i| {
        i.state.borrow_mut().log.open_edit(LogEdit::Correct);
        i.prefill_log_form();
        i.refresh_log();
    }));
    log.on_open_void(on_unit(|i| {
        i.state.borrow_mut().log.open_edit(LogEdit::Void);
        i.prefill_log_form();
        i.refresh_log();
    }));
    log.on_cancel_edit(on_unit(|i| {
        i.state.borrow_mut().log.open_edit(LogEdit::None);
        i.refresh_log();
    }));
    log.on_save_correct(on_unit(|i| {
        let window = i.window();
        let adapter = window.global::<LogAdapter>();
        let (dose, note, reason) = (
            adapter.get_edit_dose(),
            adapter.get_edit_note(),
            adapter.get_edit_reason(),
        );
        let _ = i.state.borrow_mut().correct_selected(&dose, &note, &reason);
        i.refresh_all();
    }));
    log.on_save_void(on_unit(|i| {
        let reason = i.window().global::<LogAdapter>().get_edit_reason();
        let _ = i.state.borrow_mut().void_selected(&reason);
        i.refresh_all();
    }));
    log.on_export(on_unit(|i| {
        let path = i.window().global::<LogAdapter>().get_transfer_path();
        {
            let mut st = i.state.borrow_mut();
            let st = &mut *st;
            st.log.export(&st.session, &path);
        }
        i.refresh_log();
    }));
    log.on_import(on_unit(|i| {
        let path = i.window().global::<LogAdapter>().get_transfer_path();
        i.state.borrow_mut().log.import(&path);
        i.refresh_all();
    }));

    let settings = window.global::<SettingsAdapter>();
    settings.on_set_lang(on(|i, n| {
        let lang = if n == 1 { Lang::Es } else { Lang::En };
        i.state.borrow_mut().set_lang(lang);
        i.texts.borrow_mut().set_lang(lang);
        *i.epoch.borrow_mut() += 1;
        i.refresh_all();
    }));
    settings.on_set_units(on(|i, n| {
        let system = if n == 1 {
            UnitSystem::Si
        } else {
            UnitSystem::Us
        };
        i.state.borrow_mut().set_units(system);
        i.refresh_all();
    }));
    let weak = Rc::downgrade(inner);
    settings.on_set_high_contrast(move |on| {
        if let Some(i) = weak.upgrade() {
            i.state.borrow_mut().set_high_contrast(on);
            i.refresh_all();
        }
    });
    settings.on_set_initials(on_text(|i, t| {
        i.state.borrow_mut().set_initials(t);
        // "Enter your initials first" goes with its cause.
        i.refresh_calc(false);
    }));
    settings.on_rename_site(on_text(|i, t| {
        if i.state.borrow_mut().edit_site(|e, s| e.rename_site(s, t)) {
            i.window()
                .global::<SettingsAdapter>()
                .set_site_name_edit(s(""));
        }
        i.refresh_all();
    }));
    settings.on_add_site(on_text(|i, t| {
        if i.state.borrow_mut().edit_site(|e, s| e.add_site(s, t)) {
            i.window()
                .global::<SettingsAdapter>()
                .set_site_name_edit(s(""));
        }
        i.refresh_all();
    }));
    settings.on_reset_demo(on_unit(|i| {
        i.state.borrow_mut().edit_site(|e, s| e.reset_to_demo(s));
        i.refresh_all();
    }));
    settings.on_add_point(on_text(|i, t| {
        if i.state.borrow_mut().edit_site(|e, s| e.add_point(s, t)) {
            i.window()
                .global::<SettingsAdapter>()
                .set_tap_name_edit(s(""));
        }
        i.refresh_all();
    }));
    settings.on_rename_point(on_text(|i, t| {
        let index = i.state.borrow().session.settings.point_index;
        if i.state
            .borrow_mut()
            .edit_site(|e, s| e.rename_point(s, index, t))
        {
            i.window()
                .global::<SettingsAdapter>()
                .set_tap_name_edit(s(""));
        }
        i.refresh_all();
    }));
    settings.on_set_tap_finished(on_index_flag(|i, n, finished| {
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.set_tap_finished(s, n.max(0) as usize, finished));
        i.refresh_all();
    }));
    settings.on_remove_point(on(|i, n| {
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.remove_point(s, n.max(0) as usize));
        i.refresh_all();
    }));
    settings.on_save_product(on_unit(|i| {
        let form = i.product_form();
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.save_product(s, &form));
        i.refresh_all();
    }));
    settings.on_edit_product(on(|i, n| i.load_product(n.max(0) as usize)));
    settings.on_remove_product(on(|i, n| {
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.remove_product(s, n.max(0) as usize));
        i.refresh_all();
    }));
    settings.on_save_pump(on_unit(|i| {
        let w = i.window();
        let a = w.global::<SettingsAdapter>();
        let form = PumpForm {
            name: a.get_pump_name().to_string(),
            product: usize::try_from(a.get_pump_product_index()).ok(),
            capacity: a.get_pump_capacity().to_string(),
            unit: sites::PUMP_UNITS
                .get(a.get_pump_unit_index().max(0) as usize)
                .copied(),
        };
        i.state.borrow_mut().edit_site(|e, s| e.save_pump(s, &form));
        i.refresh_all();
    }));
    settings.on_edit_pump(on(|i, n| i.load_pump(n.max(0) as usize)));
    settings.on_remove_pump(on(|i, n| {
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.remove_pump(s, n.max(0) as usize));
        i.refresh_all();
    }));
    settings.on_save_limit(on_unit(|i| {
        let w = i.window();
        let a = w.global::<SettingsAdapter>();
        let form = LimitForm {
            parameter: limit_parameters()
                .get(a.get_limit_parameter_index().max(0) as usize)
                .map_or_else(String::new, |p| p.to_string()),
            min: a.get_limit_min().to_string(),
            max: a.get_limit_max().to_string(),
            unit: a.get_limit_unit().to_string(),
            source: a.get_limit_source().to_string(),
            enforceable: a.get_limit_enforceable(),
        };
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.save_limit(s, &form));
        i.refresh_all();
    }));
    settings.on_edit_limit(on(|i, n| i.load_limit(n.max(0) as usize)));
    settings.on_pick_instrument(on(|i, n| i.load_precision(n.max(0) as usize)));
    settings.on_save_precision(on_unit(|i| {
        let w = i.window();
        let a = w.global::<SettingsAdapter>();
        let index = a.get_instrument_index().max(0) as usize;
        let Some(&instrument) = Instrument::ALL.get(index) else {
            return;
        };
        let form = PrecisionForm {
            absolute: a.get_precision_absolute().to_string(),
            relative: a.get_precision_relative().to_string(),
        };
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.save_precision(s, instrument, &form));
        i.refresh_all();
    }));
    settings.on_remove_limit(on(|i, n| {
        i.state
            .borrow_mut()
            .edit_site(|e, s| e.remove_limit(s, n.max(0) as usize));
        i.refresh_all();
    }));
    stock::wire(window, inner);
}

impl Inner {
    /// Saves the calculator inputs two seconds after the last change: a restart (an Android
    /// activity killed in the background) finds them again, and typing never waits on storage.
    fn keep_inputs_soon(&self) {
        let weak = self.this.borrow().clone();
        self.keep_inputs.start(
            slint::TimerMode::SingleShot,
            std::time::Duration::from_secs(2),
            move || {
                if let Some(i) = weak.upgrade() {
                    i.state.borrow().save_inputs();
                }
            },
        );
    }

    fn window(&self) -> AppWindow {
        self.window
            .upgrade()
            .expect("window alive while callbacks run")
    }

    fn t(&self, key: &str) -> String {
        self.texts.borrow().get(key)
    }

    fn note(&self, note: &Note) -> String {
        let mut args = note.args.clone();
        for (name, phrase) in &note.parts {
            args.push((*name, self.note(phrase)));
        }
        self.texts.borrow().get_args(&note.key, &args)
    }

    /// A chemical or product name: translated when it is a known key, else as given.
    fn name(&self, name: &str) -> String {
        // The one wording of a name, the one the no-raw-key test renders.
        super::words::Words::name(&*self.texts.borrow(), name)
    }

    fn unit(&self, unit: Unit) -> String {
        self.t(&format!("unit-{}", unit.code()))
    }

    fn refresh_all(&self) {
        let w = self.window();
        let st = self.state.borrow();
        w.global::<Tr>().set_epoch(*self.epoch.borrow());
        w.global::<Nav>().set_screen(st.screen() as i32);
        w.global::<Theme>()
            .set_high_contrast(st.session.settings.high_contrast);

        let start = w.global::<StartAdapter>();
        start.set_sites(model(
            st.session
                .settings
                .sites
                .iter()
                .map(|x| s(&x.name))
                .collect(),
        ));
        start.set_site_index(st.session.settings.site_index as i32);
        start.set_points(model(st.taps().into_iter().map(s).collect()));
        start.set_point_index(st.session.settings.point_index as i32);
        start.set_not_saved(!st.log_is_persistent());
        start.set_calculators(model(
            CalcKind::all()
                .iter()
                .map(|k| s(self.t(&format!("calc-{}", k.code()))))
                .collect(),
        ));
        start.set_latest(model(
            st.latest_doses()
                .into_iter()
                .map(|d| LatestDose {
                    point: s(d.point),
                    // The product as delivered where the entry names one, else the compound.
                    chemical: s(d
                        .product_key
                        .as_deref()
                        .filter(|k| self.texts.borrow().has(k))
                        .map(|k| self.t(k))
                        .or(d.product_name)
                        .unwrap_or_else(|| self.name(&d.chemical))),
                    dose: s(d.dose),
                    when: s(d.when),
                })
                .collect(),
        ));

        let settings = w.global::<SettingsAdapter>();
        settings.set_lang_index(if st.lang() == Lang::Es { 1 } else { 0 });
        settings.set_units_index(if st.units() == UnitSystem::Si { 1 } else { 0 });
        settings.set_high_contrast(st.session.settings.high_contrast);
        settings.set_site_name(s(&st.site().name));
        if settings.get_initials().as_str() != st.initials() {
            settings.set_initials(s(st.initials()));
        }
        drop(st);
        self.refresh_site_editor();
        self.refresh_calc(true);
        self.refresh_log();
        self.refresh_plots();
        // The path is run (with its ranges) only while its screen is shown: navigating to it
        // refreshes everything, so it is never stale when seen.
        let on_path = self.state.borrow().screen() == Screen::Path;
        if on_path {
            self.refresh_path();
        }
        self.refresh_stock();
    }

    /// The product form as typed.
    fn product_form(&self) -> ProductForm {
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        let fields = ProductFields {
            catalog_index: a.get_catalog_index(),
            basis_index: a.get_basis_index(),
            strength: a.get_strength().to_string(),
            sg: a.get_sg().to_string(),
            certificate: a.get_certificate().to_string(),
        };
        fields.to_form(&self.state.borrow().session)
    }

    /// Puts a delivered product into the form, to change it and save again.
    fn load_product(&self, index: usize) {
        let st = self.state.borrow();
        let Some(f) = st.sites.product_fields(&st.session, index) else {
            return;
        };
        drop(st);
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        a.set_catalog_index(f.catalog_index);
        a.set_basis_index(f.basis_index);
        a.set_strength(s(f.strength));
        a.set_sg(s(f.sg));
        a.set_certificate(s(f.certificate));
    }

    fn load_pump(&self, index: usize) {
        let st = self.state.borrow();
        let Some(p) = st.sites.pump_form(&st.session, index) else {
            return;
        };
        drop(st);
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        a.set_pump_name(s(&p.name));
        a.set_pump_product_index(p.product.map_or(-1, |i| i as i32));
        a.set_pump_capacity(s(&p.capacity));
        if let Some(unit) = p.unit {
            a.set_pump_unit_index(
                sites::PUMP_UNITS
                    .iter()
                    .position(|u| *u == unit)
                    .map_or(0, |i| i as i32),
            );
        }
    }

    fn load_limit(&self, index: usize) {
        let st = self.state.borrow();
        let Some(l) = st.sites.limit_form(&st.session, index) else {
            return;
        };
        drop(st);
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        // A stored parameter no calculation checks has no place in the choice: the list row
        // says so, and the form starts from the first checked parameter.
        let index = limit_parameters().iter().position(|p| *p == l.parameter);
        a.set_limit_parameter_index(index.map_or(0, |i| i as i32));
        a.set_limit_min(s(&l.min));
        a.set_limit_max(s(&l.max));
        a.set_limit_unit(s(&l.unit));
        a.set_limit_source(s(&l.source));
        a.set_limit_enforceable(l.enforceable);
    }

    /// Fills the precision form with the site's own figures for instrument `index` (empty:
    /// the default applies) and names the unit its ± is typed in.
    fn load_precision(&self, index: usize) {
        let Some(&instrument) = Instrument::ALL.get(index) else {
            return;
        };
        let st = self.state.borrow();
        let form = st.sites.precision_form(&st.session, instrument);
        let unit = instrument.quantity().unit(st.session.units());
        drop(st);
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        a.set_instrument_index(index as i32);
        a.set_precision_unit(s(self.unit(unit)));
        a.set_precision_absolute(s(form.absolute));
        a.set_precision_relative(s(form.relative));
    }

    /// The Settings screen's profile editor: lists, choices and the last edit's outcome.
    fn refresh_site_editor(&self) {
        let w = self.window();
        let a = w.global::<SettingsAdapter>();
        let st = self.state.borrow();
        let view = st.sites.view(&st.session, &*self.texts.borrow());
        let rows = |lines: Vec<SiteLine>| {
            model(
                lines
                    .into_iter()
                    .map(|l| SiteRow {
                        title: s(l.title),
                        detail: s(l.detail),
                    })
                    .collect(),
            )
        };
        let texts = |list: Vec<String>| model(list.into_iter().map(s).collect());
        a.set_products(rows(view.products));
        a.set_pumps(rows(view.pumps));
        a.set_delivered(texts(view.delivered));
        a.set_limits(rows(view.limits));
        a.set_tap_finished(model(view.taps_finished));
        a.set_precisions(rows(precision_lines(&st.session, &*self.texts.borrow())));
        a.set_instruments(texts(instrument_choices(&*self.texts.borrow())));
        let instrument = Instrument::ALL
            .get(a.get_instrument_index().max(0) as usize)
            .copied()
            .unwrap_or(Instrument::FlowMeter);
        a.set_precision_unit(s(self.unit(instrument.quantity().unit(st.session.units()))));
        a.set_default_limits(rows(view.default_limits));
        a.set_limit_parameters(texts(view.limit_parameters));
        a.set_limit_parameter_hints(texts(view.limit_parameter_hints));
        a.set_catalog_products(texts(view.catalog_products));
        a.set_bases(texts(view.bases));
        a.set_pump_units(model(
            sites::PUMP_UNITS.iter().map(|u| s(u.symbol())).collect(),
        ));
        a.set_message(s(view.message));
        a.set_message_ok(view.message_ok);
        a.set_message_section(view.section as i32);
    }

    fn field_row(&self, f: &FieldView) -> FieldRow {
        let t = field_text(f, &*self.texts.borrow());
        FieldRow {
            label: s(t.label),
            unit: s(t.unit),
            text: s(t.text),
            error: s(t.error),
            origin: s(t.origin),
        }
    }

    /// Updates the calculator adapter. `rebuild` replaces the input rows (new calculator,
    /// units or language); otherwise only changed rows are touched so typing keeps focus.
    fn refresh_calc(&self, rebuild: bool) {
        let w = self.window();
        let st = self.state.borrow();
        let view = st.calc.view();
        let adapter = w.global::<CalcAdapter>();
        let kind_index = CalcKind::all()
            .iter()
            .position(|k| *k == view.kind)
            .unwrap_or(0);
        adapter.set_kind_index(kind_index as i32);
        let modes = view.kind.modes();
        adapter.set_modes(model(if modes.len() > 1 {
            modes
                .iter()
                .map(|m| s(self.t(&format!("mode-{}", m.code()))))
                .collect()
        } else {
            Vec::new()
        }));
        adapter.set_mode_index(modes.iter().position(|m| *m == view.mode).unwrap_or(0) as i32);
        adapter.set_products(model(
            view.products
                .iter()
                .map(|p| s(self.name(&p.name_key)))
                .collect(),
        ));
        adapter.set_product_index(view.product_index as i32);

        let rows: Vec<FieldRow> = view.fields.iter().map(|f| self.field_row(f)).collect();
        if rebuild || rows.len() != self.fields.row_count() {
            self.fields.set_vec(rows);
        } else {
            for (i, row) in rows.into_iter().enumerate() {
                if self.fields.row_data(i).as_ref() != Some(&row) {
                    self.fields.set_row_data(i, row);
                }
            }
        }

        self.refresh_calc_more(&adapter, &st.calc, &view, rebuild);
        adapter.set_note(s(st
            .calc
            .note
            .as_ref()
            .map(|n| self.note(n))
            .unwrap_or_default()));
        adapter.set_taps(model(st.taps().into_iter().map(s).collect()));
        adapter.set_tap_index(st.session.settings.point_index as i32);
        {
            let texts = self.texts.borrow();
            let status = status_text(&view, &*texts);
            adapter.set_message_error(status.error);
            adapter.set_partial(s(status.partial));
            adapter.set_summary(s(summary_text(&view, &*texts)));
        }
        match &view.status {
            Status::Ready(r) => {
                let texts = self.texts.borrow();
                let card = card_text(r, &*texts);
                adapter.set_has_result(true);
                adapter.set_message(s(""));
                adapter.set_chemical(s(card.chemical));
                let [dose, feed, product, pump] = card.bigs;
                adapter.set_dose_caption(s(dose.caption));
                adapter.set_dose(s(dose.value));
                adapter.set_dose_range(s(dose.range));
                adapter.set_feed(s(feed.value));
                adapter.set_feed_unit(s(feed.unit));
                adapter.set_feed_range(s(feed.range));
                adapter.set_product_caption(s(product.caption));
                adapter.set_product(s(product.value));
                adapter.set_product_unit(s(product.unit));
                adapter.set_product_range(s(product.range));
                adapter.set_pump_caption(s(pump.caption));
                adapter.set_pump(s(pump.value));
                adapter.set_pump_range(s(pump.range));
                adapter.set_no_volume_note(s(card.no_volume_note));
                let rows = |lines: Vec<ResultLine>| {
                    model(
                        lines
                            .into_iter()
                            .map(|l| ExtraRow {
                                label: s(l.label),
                                value: s(l.value),
                                unit: s(l.unit),
                                range: s(l.range),
                            })
                            .collect(),
                    )
                };
                adapter.set_leads(rows(card.leads));
                adapter.set_extras(rows(card.extras));
                adapter.set_figures_note(s(card.figures_note));
                adapter.set_trace(model(
                    trace_lines(&r.trace, &*texts)
                        .into_iter()
                        .map(|t| TraceRow {
                            heading: t.heading,
                            text: s(t.text),
                            origin: s(t.origin),
                        })
                        .collect(),
                ));
                adapter.set_cautions(model(
                    caution_lines(&r.cautions, &*texts)
                        .into_iter()
                        .map(caution_row)
                        .collect(),
                ));
            }
            _ => {
                let message = status_text(&view, &*self.texts.borrow()).message;
                adapter.set_has_result(false);
                adapter.set_message(s(message));
                adapter.set_dose(s(""));
                adapter.set_feed(s(""));
                adapter.set_product(s(""));
                adapter.set_pump(s(""));
                adapter.set_no_volume_note(s(""));
                adapter.set_chemical(s(""));
                adapter.set_extras(model(Vec::new()));
                adapter.set_leads(model(Vec::new()));
                adapter.set_dose_range(s(""));
                adapter.set_feed_range(s(""));
                adapter.set_product_range(s(""));
                adapter.set_pump_range(s(""));
                adapter.set_figures_note(s(""));
                adapter.set_trace(model(Vec::new()));
                adapter.set_cautions(model(Vec::new()));
            }
        }
    }

    /// The calculator's text inputs (rows kept while typing, as the number fields are) and the
    /// card's follow-up buttons, copied from their view models.
    fn refresh_calc_more(
        &self,
        adapter: &CalcAdapter,
        calc: &CalcController,
        view: &CalcView,
        rebuild: bool,
    ) {
        let texts = self.texts.borrow();
        let rows: Vec<FieldRow> = text_field_texts(calc, &*texts)
            .into_iter()
            .map(|t| FieldRow {
                label: s(t.label),
                unit: s(t.unit),
                text: s(t.text),
                error: s(t.error),
                origin: s(t.origin),
            })
            .collect();
        let shown = adapter.get_text_fields();
        if rebuild || rows.len() != shown.row_count() {
            adapter.set_text_fields(model(rows));
        } else {
            for (i, row) in rows.into_iter().enumerate() {
                if shown.row_data(i).as_ref() != Some(&row) {
                    shown.set_row_data(i, row);
                }
            }
        }
        adapter.set_follow_ups(model(
            follow_up_texts(view, &*texts).into_iter().map(s).collect(),
        ));
    }

    /// Fills the correction form with the entry's current dose and note; the reason starts
    /// empty, because each change needs its own.
    fn prefill_log_form(&self) {
        let w = self.window();
        let adapter = w.global::<LogAdapter>();
        let st = self.state.borrow();
        if let Some((dose, note)) = st.log.correction_fields(st.lang()) {
            adapter.set_edit_dose(s(dose));
            adapter.set_edit_note(s(note));
        }
        adapter.set_edit_reason(s(""));
    }

    fn refresh_log(&self) {
        let w = self.window();
        let st = self.state.borrow();
        let adapter = w.global::<LogAdapter>();
        let lang = st.lang();
        let today = utc_today();
        let texts = self.texts.borrow();
        let list = st.log.list(today, &*texts, lang);
        // Only a quick range writes the fields: typed text is left exactly as typed.
        let (from, to) = st.log.date_texts(today);
        if adapter.get_date_from() != from.as_str() {
            adapter.set_date_from(s(from));
        }
        if adapter.get_date_to() != to.as_str() {
            adapter.set_date_to(s(to));
        }
        adapter.set_date_problem(s(list.date_problem));
        adapter.set_date_summary(s(list.summary));
        adapter.set_rows(model(
            list.lines
                .into_iter()
                .map(|l| LogRow {
                    id: l.id as i32,
                    when: s(l.when),
                    site: s(l.site),
                    place: s(l.place),
                    chemical: s(l.chemical),
                    dose: s(l.dose),
                    status: s(l.status),
                    voided: l.voided,
                })
                .collect(),
        ));
        drop(texts);
        let chips = st.log.chips(&st.session, &*self.texts.borrow());
        let row = |chips: Vec<Chip>| {
            model(
                chips
                    .into_iter()
                    .map(|c| LogChoice {
                        label: s(c.label),
                        selected: c.selected,
                    })
                    .collect(),
            )
        };
        adapter.set_ranges(row(chips.ranges));
        adapter.set_points(row(chips.points));
        adapter.set_chemicals(row(chips.chemicals));
        adapter.set_formats(row(chips.formats));
        adapter.set_export_folder(s(chips.export_folder));

        let selected = st.log.selected_entry();
        adapter.set_selected_id(selected.as_ref().map_or(-1, |e| e.id as i32));
        adapter.set_can_change(selected.as_ref().is_some_and(|e| !e.voided()));
        adapter.set_editing(match st.log.edit {
            LogEdit::None => 0,
            LogEdit::Correct => 1,
            LogEdit::Void => 2,
        });
        let (detail, status) = st.log.detail_lines(&*self.texts.borrow());
        adapter.set_detail(model(detail.into_iter().map(s).collect()));
        adapter.set_detail_status(s(status));
        let history = st.log.history_lines(&*self.texts.borrow(), lang);
        adapter.set_history(model(
            history
                .into_iter()
                .map(|h| HistoryRow {
                    heading: s(h.heading),
                    reason: s(h.reason),
                    note: s(h.note),
                })
                .collect(),
        ));
        let note = |n: &Option<Note>| n.as_ref().map(|n| self.note(n)).unwrap_or_default();
        adapter.set_edit_status(s(note(&st.log.edit_note)));
        adapter.set_status(s(note(&st.log.note)));
    }

    fn plot_data(&self, view: PlotView, title_key: &str, y_key: &str) -> PlotData {
        let t = view.worded(title_key, y_key, &*self.texts.borrow());
        PlotData {
            title: s(t.title),
            commands: s(t.commands),
            grid: s(t.grid),
            x_label: s(t.x_label),
            y_label: s(t.y_label),
            y_lo: s(t.y_lo),
            y_hi: s(t.y_hi),
            x_lo: s(t.x_lo),
            x_hi: s(t.x_hi),
            markers: s(t.markers),
            legend: s(t.legend),
            message: s(t.message),
            y_ticks: ticks(&t.y_ticks),
            x_ticks: ticks(&t.x_ticks),
            target: s(t.target),
            target_label: s(t.target_label),
            target_at: t.target_at as f32,
        }
    }

    /// The Plant path screen: its controller's view, copied.
    fn refresh_path(&self) {
        let w = self.window();
        let st = self.state.borrow();
        let texts = self.texts.borrow();
        let v = st.path.view(&st.session, &*texts);
        let a = w.global::<PathAdapter>();
        a.set_fields(model(
            v.fields
                .into_iter()
                .map(|f| PathField {
                    name: s(f.name),
                    label: s(f.label),
                    unit: s(f.unit),
                    text: s(f.text),
                    error: s(f.error),
                })
                .collect(),
        ));
        a.set_feeds(model(
            v.feeds
                .into_iter()
                .map(|f| PathFeed {
                    point: s(f.point),
                    product: s(f.product),
                    label: s(f.label),
                    text: s(f.text),
                    error: s(f.error),
                })
                .collect(),
        ));
        a.set_points(model(
            v.points
                .into_iter()
                .map(|p| PathPoint {
                    name: s(p.name),
                    feeds: s(p.feeds),
                    water: s(p.water),
                    basin: s(p.basin),
                    opens: p.opens,
                    two: p.two,
                })
                .collect(),
        ));
        a.set_cautions(model(v.cautions.into_iter().map(caution_row).collect()));
        a.set_finished(s(v.finished));
        a.set_message(s(v.message));
        a.set_ph_line(s(v.ph_line));
        a.set_alkalinity_line(s(v.alkalinity_line));
        a.set_grid(s(v.grid));
        a.set_ph_lo(s(v.ph_lo));
        a.set_ph_hi(s(v.ph_hi));
        a.set_alkalinity_lo(s(v.alkalinity_lo));
        a.set_alkalinity_hi(s(v.alkalinity_hi));
        refresh_path_two(&a, v.two);
    }

    fn refresh_plots(&self) {
        let w = self.window();
        let st = self.state.borrow();
        let adapter = w.global::<PlotAdapter>();
        adapter.set_titration(self.plot_data(
            st.titration_plot(),
            key("plot-titration"),
            key("plot-ph-axis"),
        ));
        adapter.set_trend(self.plot_data(
            st.trend_plot(),
            key("plot-trend"),
            key("plot-dose-axis"),
        ));
    }
}

/// The Plant path's two-target panel: open, pick the second target, type the targets.
fn wire_path_two(path: &PathAdapter, inner: &Rc<Inner>) {
    let weak = Rc::downgrade(inner);
    path.on_open_two(move |n| {
        if let Some(i) = weak.upgrade() {
            {
                let mut st = i.state.borrow_mut();
                let st = &mut *st;
                st.path.open_two_targets(&st.session, n.max(0) as usize);
            }
            i.refresh_path();
        }
    });
    let weak = Rc::downgrade(inner);
    path.on_pick_second(move |code| {
        if let Some(i) = weak.upgrade() {
            i.state.borrow_mut().path.pick_second_target(&code);
            i.refresh_path();
        }
    });
    let weak = Rc::downgrade(inner);
    path.on_edit_two(move |name, text| {
        if let Some(i) = weak.upgrade() {
            i.state.borrow_mut().path.edit_two_targets(&name, &text);
            i.refresh_path();
        }
    });
}

/// The two-target panel's words, copied; closed when the controller has none.
fn refresh_path_two(a: &PathAdapter, two: Option<super::path_screen::TwoTargetsView>) {
    let field = |f: super::path_screen::PathField| PathField {
        name: s(f.name),
        label: s(f.label),
        unit: s(f.unit),
        text: s(f.text),
        error: s(f.error),
    };
    a.set_two_open(two.is_some());
    let t = two.unwrap_or_default();
    a.set_two_point(t.point as i32);
    a.set_two_title(s(t.title));
    a.set_two_arriving(s(t.arriving));
    // Three chips, then two: each group fits a phone's row.
    let mut chips: Vec<(SharedString, SharedString)> =
        t.seconds.into_iter().map(|(c, l)| (s(c), s(l))).collect();
    let rest = chips.split_off(chips.len().min(3));
    a.set_two_seconds_a(model(chips));
    a.set_two_seconds_b(model(rest));
    a.set_two_second(s(t.second));
    a.set_two_ph(field(t.ph));
    a.set_two_value(field(t.value));
    a.set_two_doses(model(t.doses.into_iter().map(s).collect()));
    a.set_two_after(s(t.after));
    a.set_two_message(s(t.message));
    a.set_two_reach(s(t.reach));
}

/// A caution line as the card and the path screen show it.
fn caution_row(c: super::calc_screen::CautionLine) -> CautionRow {
    CautionRow {
        level: c.level,
        word: s(c.word),
        text: s(c.text),
    }
}

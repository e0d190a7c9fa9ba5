//! The bridge's part for the Stock view and the Log screen's reading and report cards: the
//! callbacks call the stock steps of [`AppState`] (in `stock_view`), then the view models are
//! copied into `StockAdapter` and `ReadingAdapter`. No logic beyond copying.
//!
//! Design choice: a child module of the bridge, so it shares the bridge's `Inner` and helpers
//! while the other screens' wiring stays untouched.

use super::{Inner, caution_row, model, s};
use crate::app::log_screen::Chip;
use crate::app::stock_view::STOCK_WINDOW_DAYS;
use crate::app::ui::*;
use slint::{ComponentHandle, SharedString};
use std::rc::Rc;

fn now() -> chrono::DateTime<chrono::FixedOffset> {
    chrono::Local::now().fixed_offset()
}

fn choices(chips: Vec<Chip>) -> slint::ModelRc<ReadingChoice> {
    model(
        chips
            .into_iter()
            .map(|c| ReadingChoice {
                label: s(c.label),
                selected: c.selected,
            })
            .collect(),
    )
}

/// Registers the reading and report callbacks.
pub(super) fn wire(window: &AppWindow, inner: &Rc<Inner>) {
    let on = |f: fn(&Inner, i32)| {
        let weak = Rc::downgrade(inner);
        move |i: i32| {
            if let Some(inner) = weak.upgrade() {
                f(&inner, i);
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
    let a = window.global::<ReadingAdapter>();
    a.on_pick_kind(on(|i, n| {
        i.take_form();
        {
            let mut st = i.state.borrow_mut();
            let st = &mut *st;
            st.stock.pick_kind(n.max(0) as usize, st.session.site());
        }
        i.refresh_stock();
    }));
    a.on_pick_subject(on(|i, n| {
        i.take_form();
        {
            let mut st = i.state.borrow_mut();
            let st = &mut *st;
            st.stock.pick_subject(n.max(0) as usize, st.session.site());
        }
        i.refresh_stock();
    }));
    a.on_pick_parameter(on(|i, n| {
        i.take_form();
        {
            let mut st = i.state.borrow_mut();
            let st = &mut *st;
            st.stock
                .pick_parameter(n.max(0) as usize, st.session.site());
        }
        i.refresh_stock();
    }));
    a.on_pick_unit(on(|i, n| {
        i.take_form();
        i.state.borrow_mut().stock.pick_unit(n.max(0) as usize);
        i.refresh_stock();
    }));
    a.on_record(on_unit(|i| {
        i.take_form();
        i.state.borrow_mut().record_reading(now());
        i.refresh_stock();
    }));
    a.on_select(on(|i, n| {
        let id = {
            let st = i.state.borrow();
            let readings = st.site_readings();
            readings.iter().rev().nth(n.max(0) as usize).map(|r| r.id)
        };
        if let Some(id) = id {
            i.state.borrow_mut().open_reading(id);
        }
        i.window().global::<ReadingAdapter>().set_reason(s(""));
        i.refresh_stock();
    }));
    a.on_correct(on_unit(|i| {
        i.take_form();
        let reason = i.window().global::<ReadingAdapter>().get_reason();
        i.state.borrow_mut().correct_reading(&reason);
        i.refresh_stock();
    }));
    a.on_void(on_unit(|i| {
        let reason = i.window().global::<ReadingAdapter>().get_reason();
        i.state.borrow_mut().void_reading(&reason);
        i.refresh_stock();
    }));
    a.on_cancel(on_unit(|i| {
        {
            let mut st = i.state.borrow_mut();
            st.stock.selected = None;
            st.stock.message = None;
            st.stock.form.value.clear();
        }
        i.refresh_stock();
    }));
    let settings = window.global::<SettingsAdapter>();
    settings.on_save_fed_tolerance(on_unit(|i| {
        let text = i.window().global::<SettingsAdapter>().get_fed_tolerance();
        let saved = i
            .state
            .borrow_mut()
            .edit_site(|e, s| e.save_fed_tolerance(s, &text));
        if saved {
            i.show_fed_tolerance();
        }
        i.refresh_all();
    }));
    a.on_save_report(on_unit(|i| {
        let month = i.window().global::<ReadingAdapter>().get_month();
        {
            let mut st = i.state.borrow_mut();
            st.stock.month = month.to_string();
            st.save_month_report();
        }
        i.refresh_stock();
    }));
}

impl Inner {
    /// Reads what the operator typed in the form into the controller.
    fn take_form(&self) {
        let w = self.window();
        let a = w.global::<ReadingAdapter>();
        let mut st = self.state.borrow_mut();
        let f = &mut st.stock.form;
        f.value = a.get_value().to_string();
        f.note_number = a.get_note_number().to_string();
        f.earlier = a.get_earlier().to_string();
        f.yesterday = a.get_yesterday();
    }

    /// The Settings field of the site's fed-dose tolerance, as the site has it.
    fn show_fed_tolerance(&self) {
        let text =
            crate::app::site_editor::SiteEditor::fed_tolerance_text(&self.state.borrow().session);
        self.window()
            .global::<SettingsAdapter>()
            .set_fed_tolerance(s(text));
    }

    /// Copies the reading card, the report card and the Stock view.
    pub(super) fn refresh_stock(&self) {
        let w = self.window();
        {
            let mut st = self.state.borrow_mut();
            if st.stock.form.subject.is_empty() {
                let st = &mut *st;
                let kind = crate::app::stock_view::KINDS
                    .iter()
                    .position(|k| *k == st.stock.form.kind)
                    .unwrap_or(0);
                st.stock.pick_kind(kind, st.session.site());
            }
        }
        // Outside Settings the tolerance field follows the site (a site switch, a reset);
        // on Settings it keeps what is being typed.
        if self.state.borrow().screen() != crate::app::state::Screen::Settings {
            self.show_fed_tolerance();
        }
        let st = self.state.borrow();
        let texts = self.texts.borrow();
        let a = w.global::<ReadingAdapter>();
        let c = st.stock.choices(st.session.site(), &*texts);
        a.set_kinds(choices(c.kinds));
        a.set_subjects(choices(c.subjects));
        a.set_parameters(choices(c.parameters));
        a.set_is_delivery(!c.units.is_empty());
        a.set_units(choices(c.units));
        a.set_value_unit(s(c.value_unit));
        a.set_initials(s(st.initials()));
        let f = &st.stock.form;
        let put = |get: SharedString, text: &str, set: &dyn Fn(SharedString)| {
            if get.as_str() != text {
                set(s(text));
            }
        };
        put(a.get_value(), &f.value, &|t| a.set_value(t));
        put(a.get_note_number(), &f.note_number, &|t| {
            a.set_note_number(t)
        });
        put(a.get_earlier(), &f.earlier, &|t| a.set_earlier(t));
        a.set_yesterday(f.yesterday);
        put(a.get_month(), &st.stock.month, &|t| a.set_month(t));
        // The readings are read from the log only while the Log screen is shown (navigating
        // to it refreshes everything), so other screens' refreshes never pay for them.
        let on_log = st.screen() == crate::app::state::Screen::Log;
        let readings = if on_log {
            st.site_readings()
        } else {
            Vec::new()
        };
        let lines = crate::app::stock_screen::StockScreen::reading_lines(
            st.session.site(),
            &readings,
            &*texts,
        );
        if on_log {
            a.set_selected(
                st.stock
                    .selected
                    .and_then(|id| lines.iter().position(|l| l.id == id))
                    .map_or(-1, |p| p as i32),
            );
            a.set_rows(model(
                lines
                    .into_iter()
                    .enumerate()
                    .map(|(n, l)| ReadingRow {
                        index: n as i32,
                        when: s(l.when),
                        what: s(l.what),
                        value: s(l.value),
                        status: s(l.status),
                        voided: l.voided,
                    })
                    .collect(),
            ));
        }
        drop(texts);
        let note = |n: &Option<crate::app::state::Note>| {
            n.as_ref().map(|n| self.note(n)).unwrap_or_default()
        };
        a.set_message(s(note(&st.stock.message)));
        a.set_report_message(s(note(&st.stock.report_note)));
        let texts = self.texts.borrow();
        let report_lines = st
            .stock
            .report
            .as_ref()
            .map(|r| crate::app::stock_screen::StockScreen::report_lines(r, &*texts))
            .unwrap_or_default();
        a.set_report_lines(model(report_lines.into_iter().map(s).collect()));

        // The Stock view is computed only while it is shown (it reads the whole log).
        if st.screen() == crate::app::state::Screen::Stock {
            let today = now().date_naive();
            let sa = w.global::<StockAdapter>();
            let tanks = st.stock_lines(today, &*texts);
            sa.set_tanks(model(
                tanks
                    .into_iter()
                    .map(|t| StockTank {
                        name: s(t.name),
                        product: s(t.product),
                        level: s(t.level),
                        volume: s(t.volume),
                        fill: s(t.fill),
                        supply: s(t.supply),
                        reorder: s(t.reorder),
                        cautions: model(
                            t.cautions
                                .into_iter()
                                .map(|c| {
                                    caution_row(crate::app::calc_screen::CautionLine {
                                        level: c.level,
                                        word: c.word,
                                        text: c.text,
                                    })
                                })
                                .collect(),
                        ),
                    })
                    .collect(),
            ));
            sa.set_summary(s(texts.get_args(
                crate::app::calc::key("stock-summary"),
                &[
                    ("date", today.to_string()),
                    ("days", STOCK_WINDOW_DAYS.to_string()),
                ],
            )));
        }
    }
}

//! The monthly operating report as a PDF: a cover with the plant, the period and the month's
//! totals, the daily table, a plot of the daily calculated against logged dose of each
//! product and of the residual at the entry point, and the advisory on every page.
//!
//! Design choice: `printpdf` (a maintained registry crate, no network) writes the pages; the
//! font is the app's bundled DejaVu Sans, embedded whole, so the file reads the same on any
//! machine and its text can be extracted (the test reads the plant, period and totals back).
//! Everything on the pages comes from [`Report`]; nothing is computed here beyond placing it
//! (unit changes go through `report::volume_in` and the exact constants there).

use super::report::{
    ADVISORY, Report, mass_in, mass_unit, volume_in, volume_unit, water_in, water_unit,
};
use printpdf::{
    Color, IndirectFontRef, Line, Mm, PdfDocument, PdfDocumentReference, PdfLayerReference, Point,
    Rgb,
};

const FONT: &[u8] = include_bytes!("../../ui/fonts/DejaVuSans.ttf");
const BOLD: &[u8] = include_bytes!("../../ui/fonts/DejaVuSans-Bold.ttf");
const W: f32 = 210.0;
const H: f32 = 297.0;
/// Table rows per page.
const ROWS: usize = 40;

struct Pages {
    doc: PdfDocumentReference,
    font: IndirectFontRef,
    bold: IndirectFontRef,
    first: Option<PdfLayerReference>,
}

impl Pages {
    fn page(&mut self, title: &str) -> PdfLayerReference {
        let layer = match self.first.take() {
            Some(l) => l,
            None => {
                let (p, l) = self.doc.add_page(Mm(W), Mm(H), "page");
                self.doc.get_page(p).get_layer(l)
            }
        };
        layer.use_text(title, 14.0, Mm(15.0), Mm(H - 20.0), &self.bold);
        // The advisory on every page.
        for (i, line) in wrap(ADVISORY, 110).iter().enumerate() {
            layer.use_text(line, 7.0, Mm(15.0), Mm(14.0 - 3.5 * i as f32), &self.font);
        }
        layer
    }

    fn text(&self, layer: &PdfLayerReference, size: f32, x: f32, y: f32, text: &str) {
        layer.use_text(text, size, Mm(x), Mm(y), &self.font);
    }
}

fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in text.split_whitespace() {
        let last = lines.last_mut().map(|l| l.len()).unwrap_or(0);
        if last + word.len() + 1 > width {
            lines.push(String::new());
        }
        if let Some(l) = lines.last_mut() {
            if !l.is_empty() {
                l.push(' ');
            }
            l.push_str(word);
        }
    }
    lines
}

fn num(v: Option<f64>, decimals: usize) -> String {
    v.filter(|x| x.is_finite())
        .map_or("–".to_string(), |x| format!("{x:.decimals$}"))
}

fn pdf_error(e: impl std::fmt::Display) -> super::Error {
    super::Error::new(super::ErrorKind::InvalidEntry, format!("PDF report: {e}"))
}

fn line(layer: &PdfLayerReference, points: &[(f32, f32)], rgb: (f32, f32, f32), width: f32) {
    if points.len() < 2 {
        return;
    }
    layer.set_outline_color(Color::Rgb(Rgb::new(rgb.0, rgb.1, rgb.2, None)));
    layer.set_outline_thickness(width);
    layer.add_line(Line {
        points: points
            .iter()
            .map(|(x, y)| (Point::new(Mm(*x), Mm(*y)), false))
            .collect(),
        is_closed: false,
    });
}

/// The month's totals as the cover prints them (the test finds these lines in the PDF).
pub fn total_lines(r: &Report) -> Vec<String> {
    let unit = volume_unit(r.units);
    let mut out = vec![format!(
        "Water treated: {:.4} {}",
        water_in(r.units, r.totals.water_treated_l),
        water_unit(r.units)
    )];
    for (id, p) in &r.totals.products {
        let basis = r.bases.get(id).map_or("?", String::as_str);
        out.push(format!(
            "{id}: product used {:.1} {unit}, delivered {:.1} {unit}, active {:.1} {} as {basis}, calculated dose {} mg/L as {basis}",
            volume_in(r.units, p.product_used_l),
            volume_in(r.units, p.delivered_l),
            mass_in(r.units, p.active_used_kg),
            mass_unit(r.units),
            num(p.calculated_dose_mg_l, 3),
        ));
    }
    out.push(format!(
        "Days with data: {}; corrections: {}; voids: {}; exceedances: {}",
        r.totals.days_with_data, r.totals.corrections, r.totals.voids, r.totals.exceedances
    ));
    out
}

/// A plotted series: its name, its colour (RGB) and its (day index, value) points.
type Series<'a> = (&'a str, (f32, f32, f32), Vec<(usize, f64)>);

/// A plot box at (x, y) of size (w, h) with the series given as (day index, value), each in
/// its colour, scaled to the largest value; the axis labels say the range.
fn plot(
    pages: &Pages,
    layer: &PdfLayerReference,
    (x, y, w, h): (f32, f32, f32, f32),
    title: &str,
    days: usize,
    series: &[Series<'_>],
) {
    pages.text(layer, 9.0, x, y + h + 3.0, title);
    line(
        layer,
        &[(x, y + h), (x, y), (x + w, y)],
        (0.0, 0.0, 0.0),
        0.5,
    );
    let max = series
        .iter()
        .flat_map(|s| s.2.iter().map(|p| p.1))
        .filter(|v| v.is_finite())
        .fold(0.0_f64, f64::max);
    if max <= 0.0 {
        pages.text(layer, 8.0, x + 5.0, y + h / 2.0, "no data");
        return;
    }
    let top = max * 1.1;
    pages.text(layer, 7.0, x - 12.0, y + h - 2.0, &format!("{top:.2}"));
    pages.text(layer, 7.0, x - 5.0, y, "0");
    pages.text(layer, 7.0, x, y - 5.0, "day 1");
    pages.text(layer, 7.0, x + w - 12.0, y - 5.0, &format!("day {days}"));
    let span = days.saturating_sub(1).max(1) as f32;
    for (i, (name, rgb, points)) in series.iter().enumerate() {
        let pts: Vec<(f32, f32)> = points
            .iter()
            .filter(|p| p.1.is_finite())
            .map(|(d, v)| (x + w * *d as f32 / span, y + h * (*v / top) as f32))
            .collect();
        line(layer, &pts, *rgb, 0.8);
        line(
            layer,
            &[
                (x + w - 45.0, y + h - 4.0 - 5.0 * i as f32),
                (x + w - 38.0, y + h - 4.0 - 5.0 * i as f32),
            ],
            *rgb,
            1.2,
        );
        pages.text(layer, 7.0, x + w - 36.0, y + h - 5.0 - 5.0 * i as f32, name);
    }
}

/// The report as PDF bytes.
pub fn pdf(r: &Report) -> super::Result<Vec<u8>> {
    let title = format!("Operating report {} to {}", r.from, r.to);
    let (doc, page, layer) = PdfDocument::new(&title, Mm(W), Mm(H), "cover");
    let font = doc
        .add_external_font(std::io::Cursor::new(FONT))
        .map_err(pdf_error)?;
    let bold = doc
        .add_external_font(std::io::Cursor::new(BOLD))
        .map_err(pdf_error)?;
    let first = doc.get_page(page).get_layer(layer);
    let mut pages = Pages {
        doc,
        font,
        bold,
        first: Some(first),
    };
    let unit = volume_unit(r.units);

    // Cover: plant, period, the month's totals, the cautions.
    let cover = pages.page("Monthly operating report");
    pages.text(&cover, 12.0, 15.0, H - 35.0, &r.plant);
    pages.text(
        &cover,
        11.0,
        15.0,
        H - 43.0,
        &format!("Period: {} to {}", r.from, r.to),
    );
    let mut y = H - 58.0;
    for l in total_lines(r) {
        for part in wrap(&l, 95) {
            pages.text(&cover, 9.0, 15.0, y, &part);
            y -= 5.0;
        }
    }
    y -= 4.0;
    if !r.cautions.is_empty() {
        pages.text(&cover, 10.0, 15.0, y, "Cautions");
        y -= 5.0;
        // Every caution is printed: past the foot of a page they go on to the next.
        let mut layer = cover;
        for c in &r.cautions {
            let params: Vec<String> = c.params.iter().map(|(k, v)| format!("{k} {v}")).collect();
            let text = format!("{}: {}", c.key, params.join(", "));
            for part in wrap(&text, 105) {
                if y < 20.0 {
                    layer = pages.page("Cautions (continued)");
                    y = H - 30.0;
                }
                pages.text(&layer, 8.0, 15.0, y, &part);
                y -= 4.0;
            }
        }
    }

    // The daily table: one row per day and product.
    let header = format!(
        "date        water {:<3}  product          used {unit}   active {:<3}  calc mg/L   logged mg/L (min–max)",
        water_unit(r.units),
        mass_unit(r.units)
    );
    let mut rows = Vec::new();
    for d in &r.days {
        let water = num(d.water_treated_l.map(|l| water_in(r.units, l)), 4);
        if d.products.is_empty() {
            rows.push(format!("{}  {water:>9}", d.date));
        }
        for (id, p) in &d.products {
            rows.push(format!(
                "{}  {water:>9}   {:<15} {:>9}   {:>9}   {:>9}   {}",
                d.date,
                id,
                num(p.product_used_l.map(|l| volume_in(r.units, l)), 1),
                num(p.active_used_kg.map(|kg| mass_in(r.units, kg)), 2),
                num(p.calculated_dose_mg_l, 3),
                p.logged_dose.map_or("–".to_string(), |s| format!(
                    "{:.3} ({:.2}–{:.2})",
                    s.avg, s.min, s.max
                )),
            ));
        }
    }
    for chunk in rows.chunks(ROWS) {
        let layer = pages.page("Daily operating table");
        pages.text(&layer, 8.0, 15.0, H - 30.0, &header);
        for (i, row) in chunk.iter().enumerate() {
            pages.text(&layer, 8.0, 15.0, H - 37.0 - 5.5 * i as f32, row);
        }
    }

    // Plots: each product's calculated against logged dose, and the entry point's residual.
    let layer = pages.page("Daily doses and the entry-point residual");
    let mut top = H - 40.0;
    let ids: Vec<&String> = r.totals.products.keys().collect();
    for id in ids.iter().take(3) {
        let calc: Vec<(usize, f64)> = r
            .days
            .iter()
            .enumerate()
            .filter_map(|(i, d)| Some((i, d.products.get(*id)?.calculated_dose_mg_l?)))
            .collect();
        let logged: Vec<(usize, f64)> = r
            .days
            .iter()
            .enumerate()
            .filter_map(|(i, d)| Some((i, d.products.get(*id)?.logged_dose?.avg)))
            .collect();
        plot(
            &pages,
            &layer,
            (30.0, top - 55.0, 160.0, 50.0),
            &format!("{id}: dose, mg/L"),
            r.days.len(),
            &[
                ("calculated", (0.8, 0.2, 0.1), calc),
                ("logged", (0.1, 0.3, 0.8), logged),
            ],
        );
        top -= 70.0;
    }
    // The entry point: the first tap that reads chlorine.
    let residual: Vec<(usize, f64)> = r
        .days
        .iter()
        .enumerate()
        .filter_map(|(i, d)| {
            d.taps
                .iter()
                .find(|((_, p), _)| p == "chlorine")
                .map(|(_, s)| (i, s.avg))
        })
        .collect();
    plot(
        &pages,
        &layer,
        (30.0, top - 55.0, 160.0, 50.0),
        "Chlorine residual at the entry point (daily average), mg/L",
        r.days.len(),
        &[("residual", (0.1, 0.6, 0.2), residual)],
    );

    pages.doc.save_to_bytes().map_err(pdf_error)
}

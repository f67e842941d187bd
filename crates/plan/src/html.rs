//! A printable HTML report of the replacement plan: one self-contained file (inline CSS and SVG, no
//! scripts, no external links), one section per outage, one card per bearing.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use chrono::{DateTime, NaiveDate, Utc};

use crate::board::PlanBoard;
use crate::model::{BearingLife, Forecast, Outage};
use crate::rules::SlotWarning;
use crate::svg::{escape, spectrum_svg, trend_svg};

/// The caution printed in the report header.
pub const SAFETY_CAUTION: &str = "Advice only: these calls are advisory and do not replace the judgement of a \
competent person. Isolate and lock out a machine (including stored energy) before any work on it. Local codes and \
licensed practice prevail.";

/// The latest amplitude spectrum of a bearing, ready to draw.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SpectrumImage {
    /// When the reading was taken (shown as text).
    pub taken_at: String,
    /// Measurement point (shown as text).
    pub point: String,
    /// Frequency of each line, Hz.
    pub freq_hz: Vec<f64>,
    /// Amplitude of each line.
    pub amplitude: Vec<f64>,
    /// Amplitude units (e.g. "g").
    pub units: String,
}

/// A trend of one indicator over the bearing life.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TrendImage {
    /// What is trended (e.g. "velocity RMS").
    pub name: String,
    /// Units of the values.
    pub units: String,
    /// (day, value), oldest first.
    pub points: Vec<(NaiveDate, f64)>,
}

/// The pictures for one bearing life.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BearingImages {
    /// Latest spectrum, if a reading with a waveform exists.
    pub spectrum: Option<SpectrumImage>,
    /// Trend, if any readings exist.
    pub trend: Option<TrendImage>,
}

/// Pictures by bearing life id.
pub type ImagesByLife = BTreeMap<i64, BearingImages>;

const STYLE: &str = "body{font-family:sans-serif;font-size:11pt;margin:1.5em;color:#1b1b1b}\
h1{font-size:16pt;margin:0}h2{font-size:13pt;margin:1.2em 0 .3em;border-bottom:1px solid #999}\
.caution{border:2px solid #7a3b69;padding:.5em .8em;margin:.8em 0;background:#f7f0f5}\
.meta{color:#444;font-size:9.5pt}.card{border:1px solid #bbb;padding:.5em;margin:.5em 0;break-inside:avoid;page-break-inside:avoid}\
table.f{border-collapse:collapse;font-size:10pt}table.f th{text-align:left;padding:1px 8px 1px 0;color:#444;font-weight:normal}\
table.f td{padding:1px 8px 1px 0}.warn{color:#6b2d00;font-weight:bold}.plots svg{margin-right:.6em;border:1px solid #ddd}\
.stage{display:inline-block;min-width:1.4em;text-align:center;border-radius:.7em;font-weight:bold;padding:0 .3em}\
.s0{background:#e6ecf2;color:#1b1b1b}.s1{background:#c3d3e4;color:#1b1b1b}.s2{background:#8aa9cc;color:#0b0b0b}\
.s3{background:#4b6f9c;color:#fff}.s4{background:#22344f;color:#fff}\
@media print{body{margin:0}h2{break-after:avoid}}";

/// The HTML text of the report.
pub fn replacement_html(
    board: &PlanBoard,
    images: &ImagesByLife,
    site_name: &str,
    now: DateTime<Utc>,
) -> String {
    let mut h = String::new();
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>Bearing replacement plan: {site}</title>\
         <style>{STYLE}</style></head><body>\n<header><h1>Bearing replacement plan: {site}</h1>\
         <p class=\"meta\">Prepared {now} (UTC) from the plant database; dates as of {today}.</p>\
         <p class=\"caution\"><strong>Caution.</strong> {caution}</p></header>\n",
        site = escape(site_name),
        now = now.format("%Y-%m-%d %H:%M"),
        today = board.today,
        caution = escape(SAFETY_CAUTION),
    );
    for outage in &board.outages {
        let tasks = board.tasks_in(outage.id);
        if tasks.is_empty() && outage.end < board.today {
            continue;
        }
        outage_header(&mut h, outage);
        if tasks.is_empty() {
            h.push_str("<p class=\"meta\">No bearing replacements planned in this outage.</p>\n");
        }
        for entry in tasks {
            let warnings = board.entry_warnings(entry);
            let status = format!("{} in this outage", entry.status);
            card(
                &mut h,
                &entry.life,
                entry.forecast.as_ref(),
                &status,
                &warnings,
                images.get(&entry.life.life_id),
            );
        }
        h.push_str("</section>\n");
    }
    let open = board.open_needs();
    if !open.is_empty() {
        h.push_str("<section><h2>Bearings without a slot</h2>\n");
        for need in open {
            let status = board.suggestion(need).map_or_else(
                || {
                    board.late_offer(need).map_or_else(
                        || "not planned".to_owned(),
                        |o| {
                            format!(
                                "not planned; next outage that takes it down: {} (late)",
                                o.name
                            )
                        },
                    )
                },
                |o| format!("not planned; suggested outage: {}", o.name),
            );
            let warnings = board.open_need_warnings(need);
            card(
                &mut h,
                &need.life,
                Some(&need.forecast),
                &status,
                &warnings,
                images.get(&need.life.life_id),
            );
        }
        h.push_str("</section>\n");
    }
    h.push_str(
        "<footer class=\"meta\"><p>Stages follow the four-stage model of rolling-element bearing failure; the \
         best time to replace is between stage 2 and stage 3. Replace-by and risk-from dates are estimates.</p>\
         </footer></body></html>\n",
    );
    h
}

fn outage_header(h: &mut String, outage: &Outage) {
    let scope = scope_text(outage);
    let _ = writeln!(
        h,
        "<section><h2>{name}</h2><p class=\"meta\">{start} to {end} ({days} days). Down: {scope}.</p>",
        name = escape(&outage.name),
        start = outage.start,
        end = outage.end,
        days = outage.days(),
        scope = escape(&scope),
    );
}

fn scope_text(outage: &Outage) -> String {
    let mut parts = Vec::new();
    if !outage.areas.is_empty() {
        parts.push(format!("areas {}", outage.areas.join(", ")));
    }
    if !outage.machines.is_empty() {
        parts.push(format!("machines {}", outage.machines.join(", ")));
    }
    if parts.is_empty() {
        "nothing listed".to_owned()
    } else {
        parts.join("; ")
    }
}

fn card(
    h: &mut String,
    life: &BearingLife,
    forecast: Option<&Forecast>,
    status: &str,
    warnings: &[SlotWarning],
    images: Option<&BearingImages>,
) {
    let _ = write!(
        h,
        "<div class=\"card\"><table class=\"f\"><tr><th>Machine</th><td>{mid} ({mname}), area {area}</td></tr>\
         <tr><th>Position</th><td>{pos}</td></tr><tr><th>Bearing type</th><td>{bt}</td></tr>\
         <tr><th>Lubrication</th><td>{lub}</td></tr>",
        mid = escape(&life.machine_id),
        mname = escape(&life.machine_name),
        area = escape(&life.area),
        pos = escape(&life.position),
        bt = escape(&life.bearing_type),
        lub = escape(&life.lubrication),
    );
    if let Some(f) = forecast {
        let _ = write!(
            h,
            "<tr><th>Stage</th><td><span class=\"stage s{s}\">{s}</span></td></tr>\
             <tr><th>Fault location</th><td>{loc}</td></tr>\
             <tr><th>Evidence</th><td>{ev}</td></tr><tr><th>Replace by</th><td>{rb}</td></tr>\
             <tr><th>At risk from</th><td>{rf}</td></tr>",
            s = f.stage.min(4),
            loc = escape(&f.location.as_ref().map_or_else(
                || "not recorded".to_owned(),
                crate::model::LifeLocationCall::label
            )),
            ev = escape(&f.evidence),
            rb = f.replace_by,
            rf = f.risk_from,
        );
    } else {
        h.push_str("<tr><th>Stage</th><td>no current forecast</td></tr>");
    }
    let _ = write!(
        h,
        "<tr><th>Status</th><td>{}</td></tr></table>",
        escape(status)
    );
    for w in warnings {
        let _ = write!(
            h,
            "<p class=\"warn\">Warning: {}</p>",
            escape(&w.to_string())
        );
    }
    h.push_str("<div class=\"plots\">");
    let label = life.label();
    match images.and_then(|i| i.spectrum.as_ref()) {
        Some(s) => {
            let _ = write!(
                h,
                "<figure style=\"display:inline-block;margin:0\">{}<figcaption class=\"meta\">Spectrum, {} {}</figcaption></figure>",
                spectrum_svg(
                    &s.freq_hz,
                    &s.amplitude,
                    &s.units,
                    &format!("Latest spectrum of {label}")
                ),
                escape(&s.point),
                escape(&s.taken_at),
            );
        }
        None => h.push_str("<span class=\"meta\">No stored waveform for a spectrum.</span> "),
    }
    if let Some(t) = images.and_then(|i| i.trend.as_ref()) {
        let _ = write!(
            h,
            "<figure style=\"display:inline-block;margin:0\">{}<figcaption class=\"meta\">Trend: {}</figcaption></figure>",
            trend_svg(&t.points, &t.units, &format!("{} trend of {label}", t.name)),
            escape(&t.name),
        );
    }
    h.push_str("</div></div>\n");
}

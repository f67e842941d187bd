//! The replacement list as CSV (RFC 4180), safe to open in a spreadsheet.
//!
//! # Formula neutralising rule
//!
//! A spreadsheet treats a cell that starts with `=`, `+`, `-` or `@` as a formula, and some also act on a
//! leading tab or carriage return. Any text cell whose first character is one of `=`, `+`, `-`, `@`,
//! TAB (U+0009) or CR (U+000D) is written with an apostrophe (`'`) in front, so the spreadsheet shows it
//! as text. This is the mitigation the OWASP "CSV Injection" page recommends (from memory). The rule is
//! applied to every cell, including names from the plant file and the planner's notes; the numbers and
//! ISO dates we write never start with those characters, so they are unchanged.
//!
//! Layout: a header row, then one row per planned or done replacement (outages by start date, bearings by
//! machine and position), then one row per bearing still without a slot (status `unplanned`, outage columns
//! empty, sorted by replace-by date). `bearing_notes` holds the analyst's notes on the bearing's life (one
//! per line). `location` is the fault location accumulated over the bearing's life with its confidence
//! (`outer race (87 %)`), `unclear` when the evidence does not settle it, `none` when no defect tone was
//! found over the life, and empty when the life has no assessment yet. The last column, `caution`, repeats
//! the advisory line ([`crate::SAFETY_CAUTION`]) on every row, so it stays with any row a spreadsheet
//! filter keeps. Fields are quoted when they hold a comma, a quote or a line break; lines end in CRLF; the
//! file is UTF-8 without a byte-order mark.

use crate::board::PlanBoard;
use crate::error::Result;
use crate::model::{BearingLife, Forecast};

/// The header row, in order.
pub const CSV_COLUMNS: [&str; 20] = [
    "outage",
    "outage_start",
    "outage_end",
    "status",
    "area",
    "machine_id",
    "machine_name",
    "position",
    "bearing_type",
    "lubrication",
    "stage",
    "location",
    "replace_by",
    "risk_from",
    "evidence",
    "suggested_outage",
    "warnings",
    "note",
    "bearing_notes",
    "caution",
];

/// Prefixes an apostrophe to a cell that a spreadsheet would read as a formula (see the module doc).
///
/// Spreadsheets skip leading spaces and line breaks before a formula and read the full-width signs
/// (U+FF1D `＝`, U+FF0B `＋`, U+FF0D `－`, U+FF20 `＠`) as their ASCII forms, so those count too.
pub fn neutralise(cell: &str) -> std::borrow::Cow<'_, str> {
    let starts_formula = matches!(cell.chars().next(), Some('\t' | '\r'))
        || matches!(
            cell.trim_start().chars().next(),
            Some('=' | '+' | '-' | '@' | '\u{FF1D}' | '\u{FF0B}' | '\u{FF0D}' | '\u{FF20}')
        );
    if starts_formula {
        std::borrow::Cow::Owned(format!("'{cell}"))
    } else {
        std::borrow::Cow::Borrowed(cell)
    }
}

/// The CSV bytes of the replacement list.
pub fn replacement_csv(board: &PlanBoard) -> Result<Vec<u8>> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(Vec::new());
    w.write_record(CSV_COLUMNS)?;
    for outage in &board.outages {
        for entry in board.tasks_in(outage.id) {
            let warnings = board
                .entry_warnings(entry)
                .iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join("; ");
            let row = row(
                [
                    outage.name.clone(),
                    outage.start.to_string(),
                    outage.end.to_string(),
                    entry.status.to_string(),
                ],
                &entry.life,
                entry.forecast.as_ref(),
                String::new(),
                warnings,
                entry.note.clone(),
                bearing_notes(board, entry.life.life_id),
            );
            w.write_record(
                row.iter()
                    .map(|c| neutralise(c))
                    .collect::<Vec<_>>()
                    .iter()
                    .map(AsRef::<str>::as_ref),
            )?;
        }
    }
    for need in board.open_needs() {
        let suggested = board.suggestion(need).map_or_else(
            || {
                board
                    .late_offer(need)
                    .map(|o| format!("{} (late)", o.name))
                    .unwrap_or_default()
            },
            |o| o.name.clone(),
        );
        let warnings = board
            .open_need_warnings(need)
            .iter()
            .map(ToString::to_string)
            .collect::<Vec<_>>()
            .join("; ");
        let row = row(
            [
                String::new(),
                String::new(),
                String::new(),
                "unplanned".to_owned(),
            ],
            &need.life,
            Some(&need.forecast),
            suggested,
            warnings,
            String::new(),
            bearing_notes(board, need.life.life_id),
        );
        w.write_record(
            row.iter()
                .map(|c| neutralise(c))
                .collect::<Vec<_>>()
                .iter()
                .map(AsRef::<str>::as_ref),
        )?;
    }
    w.into_inner()
        .map_err(|e| crate::error::PlanError::Invalid(format!("CSV export: {}", e.error())))
}

/// The analyst's notes on a life, one per line.
fn bearing_notes(board: &PlanBoard, life_id: i64) -> String {
    board
        .notes
        .get(&life_id)
        .map(|n| n.join("\n"))
        .unwrap_or_default()
}

fn row(
    head: [String; 4],
    life: &BearingLife,
    forecast: Option<&Forecast>,
    suggested: String,
    warnings: String,
    note: String,
    bearing_notes: String,
) -> Vec<String> {
    let [outage, start, end, status] = head;
    let (stage, location, replace_by, risk_from, evidence) =
        forecast.map_or_else(Default::default, |f| {
            (
                f.stage.to_string(),
                f.location
                    .as_ref()
                    .map_or_else(String::new, crate::model::LifeLocationCall::label),
                f.replace_by.to_string(),
                f.risk_from.to_string(),
                f.evidence.clone(),
            )
        });
    vec![
        outage,
        start,
        end,
        status,
        life.area.clone(),
        life.machine_id.clone(),
        life.machine_name.clone(),
        life.position.clone(),
        life.bearing_type.clone(),
        life.lubrication.clone(),
        stage,
        location,
        replace_by,
        risk_from,
        evidence,
        suggested,
        warnings,
        note,
        bearing_notes,
        crate::html::SAFETY_CAUTION.to_owned(),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formula_starters_get_an_apostrophe_and_others_do_not() {
        // The characters are OWASP's list for CSV injection (from memory).
        // Spreadsheets also skip leading spaces before a formula and read the full-width signs as
        // ASCII ones (from memory), so those are neutralised too.
        for s in [
            "=1+1",
            "+1",
            "-1",
            "@SUM(A1)",
            "\tx",
            "\rx",
            " =1",
            "\u{FF1D}1+1",
        ] {
            assert_eq!(neutralise(s), format!("'{s}"));
        }
        for s in ["", "IN-P1", "2027-03-08", "a=b", "'quoted"] {
            assert_eq!(neutralise(s), s);
        }
    }
}

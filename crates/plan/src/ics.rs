//! The outage calendar as an iCalendar file (RFC 5545).
//!
//! One `VEVENT` per outage: all-day `DATE` values (`DTEND` is the day after the last outage day, as
//! RFC 5545 §3.6.1 makes `DTEND` exclusive), a `UID` stable across exports of the same outage, `DTSTAMP`
//! (the export time, UTC), `SUMMARY` (outage name and count of replacements) and `DESCRIPTION` (one line per
//! planned or done replacement). Text values escape `\`, `;`, `,` and line breaks (§3.3.11); content
//! lines end in CRLF and are folded at 75 octets without splitting a UTF-8 character (§3.1).

use std::fmt::Write as _;

use chrono::{DateTime, Utc};

use crate::board::PlanBoard;
use crate::model::{Outage, PlanEntry};

/// The `PRODID` written into the calendar.
pub const PRODID: &str = "-//Spallcast//Replacement plan 1.0//EN";

/// Escapes a TEXT value (RFC 5545 §3.3.11): backslash, semicolon, comma, and line breaks as `\n`.
pub fn escape_text(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' => out.push_str("\\\\"),
            ';' => out.push_str("\\;"),
            ',' => out.push_str("\\,"),
            '\r' => {
                // CRLF and a lone CR are both one line break.
                if chars.peek() == Some(&'\n') {
                    chars.next();
                }
                out.push_str("\\n");
            }
            '\n' => out.push_str("\\n"),
            c if c.is_control() => {} // Other control characters are not allowed in TEXT.
            c => out.push(c),
        }
    }
    out
}

/// Folds one content line to at most 75 octets per physical line (continuations start with a space),
/// never splitting a UTF-8 character, and ends every physical line with CRLF.
pub fn fold_line(line: &str) -> String {
    const LIMIT: usize = 75;
    let mut out = String::with_capacity(line.len() + line.len() / 70 * 3 + 2);
    let mut used = 0;
    for c in line.chars() {
        let len = c.len_utf8();
        if used + len > LIMIT {
            out.push_str("\r\n ");
            used = 1; // The leading space counts.
        }
        out.push(c);
        used += len;
    }
    out.push_str("\r\n");
    out
}

/// A UID for an outage that stays the same across exports (so a calendar program updates the event
/// instead of adding a copy).
pub fn outage_uid(outage: &Outage) -> String {
    format!(
        "spallcast-outage-{}-{}@plan.spallcast.invalid",
        outage.id,
        outage.start.format("%Y%m%d")
    )
}

/// One description line for a replacement task.
pub fn task_line(entry: &PlanEntry) -> String {
    let life = &entry.life;
    let mut s = format!(
        "{} {} ({}): replace {} bearing, {} lubricated",
        life.machine_id, life.position, life.machine_name, life.bearing_type, life.lubrication
    );
    if let Some(f) = &entry.forecast {
        let _ = write!(s, "; stage {}; replace by {}", f.stage, f.replace_by);
    }
    if entry.status != crate::model::PlanStatus::Planned {
        let _ = write!(s, " [{}]", entry.status);
    }
    s
}

/// The iCalendar text of the plan: every outage on the board, with its replacement tasks.
pub fn replacement_ics(board: &PlanBoard, now: DateTime<Utc>) -> String {
    let stamp = now.format("%Y%m%dT%H%M%SZ").to_string();
    let mut out = String::new();
    let mut line = |s: &str| out.push_str(&fold_line(s));
    line("BEGIN:VCALENDAR");
    line(&format!("PRODID:{PRODID}"));
    line("VERSION:2.0");
    line("CALSCALE:GREGORIAN");
    line("METHOD:PUBLISH");
    for outage in &board.outages {
        let tasks = board.tasks_in(outage.id);
        let summary = match tasks.len() {
            0 => format!("{} (no bearing replacements planned)", outage.name),
            1 => format!("{} (1 bearing replacement)", outage.name),
            n => format!("{} ({n} bearing replacements)", outage.name),
        };
        let mut description = format!("Outage {} to {}.", outage.start, outage.end);
        if tasks.is_empty() {
            description.push_str("\nNo bearing replacements planned.");
        } else {
            description.push_str("\nBearing replacements:");
            for t in &tasks {
                description.push('\n');
                description.push_str(&task_line(t));
            }
        }
        description.push_str("\nAdvice only: isolate and lock out before work; local codes and licensed practice prevail.");
        let end_exclusive = outage.end.succ_opt().unwrap_or(outage.end);
        line("BEGIN:VEVENT");
        line(&format!("UID:{}", outage_uid(outage)));
        line(&format!("DTSTAMP:{stamp}"));
        line(&format!(
            "DTSTART;VALUE=DATE:{}",
            outage.start.format("%Y%m%d")
        ));
        line(&format!(
            "DTEND;VALUE=DATE:{}",
            end_exclusive.format("%Y%m%d")
        ));
        line(&format!("SUMMARY:{}", escape_text(&summary)));
        line(&format!("DESCRIPTION:{}", escape_text(&description)));
        line("TRANSP:OPAQUE");
        line("END:VEVENT");
    }
    line("END:VCALENDAR");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_the_four_specials() {
        // RFC 5545 §3.3.11: ESCAPED-CHAR = "\\" / "\;" / "\," / "\N" / "\n".
        assert_eq!(escape_text(r"a\b;c,d"), r"a\\b\;c\,d");
        assert_eq!(escape_text("one\ntwo\r\nthree"), r"one\ntwo\nthree");
        assert_eq!(escape_text("plain: text"), "plain: text");
    }

    #[test]
    fn folds_at_75_octets_without_splitting_characters() {
        // RFC 5545 §3.1: lines SHOULD NOT be longer than 75 octets, excluding the line break.
        let long = format!("DESCRIPTION:{}", "é".repeat(100)); // 2 octets each.
        let folded = fold_line(&long);
        assert!(folded.ends_with("\r\n"));
        for physical in folded.split("\r\n").filter(|l| !l.is_empty()) {
            assert!(
                physical.len() <= 75,
                "{} octets: {physical}",
                physical.len()
            );
        }
        // Unfolding (remove CRLF + one space) gives back the line.
        assert_eq!(folded.trim_end_matches("\r\n").replace("\r\n ", ""), long);
        // A short line is unchanged.
        assert_eq!(fold_line("VERSION:2.0"), "VERSION:2.0\r\n");
        // Exactly 75 octets fit on one line; 76 do not.
        assert_eq!(fold_line(&"x".repeat(75)).matches("\r\n").count(), 1);
        assert_eq!(fold_line(&"x".repeat(76)).matches("\r\n").count(), 2);
    }
}

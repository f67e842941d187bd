//! The planner's exports read back with independent parsers: the `csv` crate for RFC 4180 and the
//! `icalendar` crate's parser for RFC 5545 (our iCalendar writer is hand-written, so the parser is a
//! separate implementation of the standard).
#![allow(
    clippy::unwrap_used,
    reason = "test helpers: a failure here is a broken test"
)]

use std::collections::BTreeMap;

use chrono::{NaiveDate, TimeZone, Utc};
use icalendar::{Component, DatePerhapsTime};
use spallcast_plan::{
    BearingImages, BearingLife, BearingNeed, ExportContext, ExportFormat, Forecast, ImagesByLife,
    LifeLocationCall, Outage, PlanBoard, PlanEntry, PlanStatus, SAFETY_CAUTION, SpectrumImage,
    TrendImage, export_bytes, export_to_path,
};

fn d(s: &str) -> NaiveDate {
    s.parse().unwrap()
}

fn life(id: i64, machine: &str, name: &str, area: &str, position: &str) -> BearingLife {
    BearingLife {
        life_id: id,
        machine_id: machine.into(),
        machine_name: name.into(),
        area: area.into(),
        position: position.into(),
        bearing_type: "TCX-209".into(),
        lubrication: "grease".into(),
        installed: d("2024-02-12"),
    }
}

fn forecast(stage: u8, evidence: &str, replace_by: &str, risk_from: &str) -> Forecast {
    Forecast {
        stage,
        evidence: evidence.into(),
        replace_by: d(replace_by),
        risk_from: d(risk_from),
        location: evidence.contains("outer-race").then_some(LifeLocationCall {
            location: spallcast_model::Location::OuterRace,
            confidence_pct: 87,
        }),
    }
}

/// A board whose text fields hold everything the formats must escape: commas, quotes, semicolons,
/// backslashes, line breaks, formula starters, non-ASCII and HTML markup.
fn tricky_board() -> PlanBoard {
    let spring = Outage {
        id: 2,
        name: "Spring shutdown, \"big\" one; phase\\2".into(),
        start: d("2027-03-08"),
        end: d("2027-03-12"),
        areas: vec!["Intake".into()],
        machines: vec![],
    };
    let filters = Outage {
        id: 3,
        name: "Filter hall stop".into(),
        start: d("2027-04-05"),
        end: d("2027-04-06"),
        areas: vec!["Filters".into()],
        machines: vec![],
    };
    let e1 = PlanEntry {
        id: 10,
        outage_id: 2,
        status: PlanStatus::Planned,
        note: "=HYPERLINK(\"http://x\")".into(),
        life: life(1, "IN-P1", "Intake pump 1, motor", "Intake", "MNDE"),
        forecast: Some(forecast(
            2,
            "outer-race tones at 3.58x, 2 harmonics\nenvelope rise 9 dB",
            "2027-04-20",
            "2027-06-01",
        )),
    };
    let e2 = PlanEntry {
        id: 11,
        outage_id: 2,
        status: PlanStatus::Done,
        note: String::new(),
        life: life(2, "IN-P2", "Intake pump 2 — <east>", "Intake", "MDE"),
        forecast: None,
    };
    // Planned in the filter stop although it is an intake machine, and too late: two warnings.
    let e3 = PlanEntry {
        id: 12,
        outage_id: 3,
        status: PlanStatus::Planned,
        note: "+1 spare on shelf".into(),
        life: life(3, "IN-P3", "Intake pump 3", "Intake", "@DE"),
        forecast: Some(forecast(3, "-12 dB floor rise", "2027-02-01", "2027-03-01")),
    };
    let cancelled = PlanEntry {
        id: 13,
        outage_id: 3,
        status: PlanStatus::Cancelled,
        note: "no longer needed".into(),
        life: life(6, "FI-B9", "Old blower", "Filters", "FDE"),
        forecast: None,
    };
    let open = BearingNeed {
        life: life(4, "FI-B1", "Backwash blower", "Filters", "FDE"),
        forecast: forecast(2, "\tcage tone", "2027-04-30", "2027-07-01"),
    };
    let urgent = BearingNeed {
        life: life(5, "IN-P4", "Intake pump 4", "Intake", "MNDE"),
        forecast: forecast(3, "sidebands at 1x", "2027-02-15", "2027-03-01"),
    };
    let mut board = PlanBoard {
        today: d("2026-12-01"),
        outages: vec![filters, spring],
        needs: vec![open, urgent],
        entries: vec![e1, e2, e3, cancelled],
        notes: BTreeMap::from([(
            1,
            vec!["2026-11-02 lubrication: =regreased 2 shots".to_owned()],
        )]),
    };
    board.normalise();
    board
}

fn ctx(images: &ImagesByLife) -> ExportContext<'_> {
    ExportContext {
        site_name: "Tallow Creek <Water> Works",
        now: Utc.with_ymd_and_hms(2026, 12, 1, 23, 30, 5).unwrap(),
        images,
    }
}

#[test]
fn csv_reads_back_field_for_field_with_an_rfc4180_parser() {
    let board = tricky_board();
    let images = ImagesByLife::new();
    let bytes = export_bytes(&board, ExportFormat::Csv, &ctx(&images)).unwrap();
    // RFC 4180 §2: records end in CRLF.
    let text = String::from_utf8(bytes.clone()).unwrap();
    assert!(text.ends_with("\r\n"));
    assert!(!text.replace("\r\n", "").contains("\r\n"));
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes.as_slice());
    let header: Vec<String> = r.headers().unwrap().iter().map(str::to_owned).collect();
    assert_eq!(
        header,
        spallcast_plan::csv_export::CSV_COLUMNS
            .map(str::to_owned)
            .to_vec()
    );
    let rows: Vec<BTreeMap<String, String>> = r
        .records()
        .map(|rec| {
            header
                .iter()
                .cloned()
                .zip(rec.unwrap().iter().map(str::to_owned))
                .collect()
        })
        .collect();
    // Planned/done in outage order (spring before filters), cancelled left out, then the open needs by
    // replace-by date.
    assert_eq!(rows.len(), 5);
    let key: Vec<(&str, &str)> = rows
        .iter()
        .map(|r| (r["machine_id"].as_str(), r["status"].as_str()))
        .collect();
    assert_eq!(
        key,
        vec![
            ("IN-P1", "planned"),
            ("IN-P2", "done"),
            ("IN-P3", "planned"),
            ("IN-P4", "unplanned"),
            ("FI-B1", "unplanned")
        ]
    );
    let r0 = &rows[0];
    assert_eq!(r0["outage"], "Spring shutdown, \"big\" one; phase\\2");
    assert_eq!(r0["outage_start"], "2027-03-08");
    assert_eq!(r0["outage_end"], "2027-03-12");
    assert_eq!(r0["area"], "Intake");
    assert_eq!(r0["machine_name"], "Intake pump 1, motor");
    assert_eq!(r0["position"], "MNDE");
    assert_eq!(r0["bearing_type"], "TCX-209");
    assert_eq!(r0["lubrication"], "grease");
    assert_eq!(r0["stage"], "2");
    assert_eq!(r0["location"], "outer race (87 %)");
    assert!(
        rows.iter()
            .any(|r| !r["stage"].is_empty() && r["location"].is_empty()),
        "a forecast without a recorded location leaves the cell empty"
    );
    assert_eq!(r0["replace_by"], "2027-04-20");
    assert_eq!(r0["risk_from"], "2027-06-01");
    assert_eq!(
        r0["evidence"],
        "outer-race tones at 3.58x, 2 harmonics\nenvelope rise 9 dB"
    );
    assert_eq!(r0["warnings"], "");
    assert_eq!(r0["suggested_outage"], "");
    // Formula neutralised with an apostrophe.
    assert_eq!(r0["note"], "'=HYPERLINK(\"http://x\")");
    // The analyst's notes on the life ride with its row.
    assert_eq!(
        r0["bearing_notes"],
        "2026-11-02 lubrication: =regreased 2 shots"
    );
    let r1 = &rows[1];
    assert_eq!(r1["machine_name"], "Intake pump 2 — <east>");
    assert_eq!((r1["stage"].as_str(), r1["replace_by"].as_str()), ("", ""));
    let r2 = &rows[2];
    assert_eq!(r2["outage"], "Filter hall stop");
    assert_eq!(r2["position"], "'@DE");
    assert_eq!(r2["evidence"], "'-12 dB floor rise");
    assert_eq!(r2["note"], "'+1 spare on shelf");
    assert!(
        r2["warnings"].contains("does not take machine IN-P3 down"),
        "{}",
        r2["warnings"]
    );
    assert!(
        r2["warnings"].contains("at risk of failing"),
        "{}",
        r2["warnings"]
    );
    let r3 = &rows[3];
    assert_eq!(r3["outage"], "");
    assert_eq!(r3["replace_by"], "2027-02-15");
    assert!(
        r3["warnings"].contains("unplanned stop"),
        "{}",
        r3["warnings"]
    );
    let r4 = &rows[4];
    assert_eq!(r4["evidence"], "'\tcage tone");
    assert_eq!(r4["suggested_outage"], "Filter hall stop");
    assert_eq!(r4["warnings"], "");
}

/// The planner's CSV carries the advisory caution on every row (GUIDE: calls are advisory; isolate
/// and lock out before work), read back with the `csv` crate.
#[test]
fn csv_rows_carry_the_advisory_caution() {
    let board = tricky_board();
    let images = ImagesByLife::new();
    let bytes = export_bytes(&board, ExportFormat::Csv, &ctx(&images)).unwrap();
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes.as_slice());
    let header = r.headers().unwrap().clone();
    assert_eq!(header.iter().next_back(), Some("caution"));
    let mut rows = 0;
    for rec in r.records() {
        let rec = rec.unwrap();
        assert_eq!(rec.iter().next_back(), Some(SAFETY_CAUTION));
        rows += 1;
    }
    assert_eq!(rows, 5);
    assert!(SAFETY_CAUTION.contains("advisory") && SAFETY_CAUTION.contains("lock out"));
}

#[test]
fn no_csv_cell_starts_a_formula() {
    // OWASP "CSV Injection" (from memory): cells starting with = + - @ TAB CR are formulas to a spreadsheet.
    let mut board = tricky_board();
    for (i, evil) in [
        "=cmd|' /C calc'!A0",
        "+SUM(1)",
        "-2+3",
        "@A1",
        "\t=1",
        "\r=1",
    ]
    .iter()
    .enumerate()
    {
        board.needs.push(BearingNeed {
            life: life(100 + i as i64, evil, evil, evil, evil),
            forecast: forecast(2, evil, "2027-05-01", "2027-06-01"),
        });
    }
    let images = ImagesByLife::new();
    let bytes = export_bytes(&board, ExportFormat::Csv, &ctx(&images)).unwrap();
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes.as_slice());
    let mut cells = 0;
    for rec in r.records() {
        for cell in &rec.unwrap() {
            cells += 1;
            let first = cell.chars().next();
            assert!(
                !matches!(first, Some('=' | '+' | '-' | '@' | '\t' | '\r')),
                "unsafe cell {cell:?}"
            );
        }
    }
    assert!(cells > 6 * 17);
    // The original text is kept after the apostrophe.
    let text = String::from_utf8(bytes).unwrap();
    assert!(text.contains("'=cmd|' /C calc'!A0"));
    assert!(text.contains("'@A1"));
}

fn unfold(text: &str) -> Vec<String> {
    text.split("\r\n").map(str::to_owned).collect()
}

#[test]
fn icalendar_reads_back_with_an_independent_parser() {
    let board = tricky_board();
    let images = ImagesByLife::new();
    let bytes = export_bytes(&board, ExportFormat::Ics, &ctx(&images)).unwrap();
    let text = String::from_utf8(bytes).unwrap();
    // RFC 5545 §3.1: CRLF line breaks, no physical line over 75 octets.
    assert!(text.ends_with("END:VCALENDAR\r\n"));
    assert!(!text.replace("\r\n", "").contains('\n'), "bare LF");
    for physical in unfold(&text) {
        assert!(
            physical.len() <= 75,
            "{} octets: {physical:?}",
            physical.len()
        );
    }
    assert!(
        text.contains("\r\n "),
        "a long DESCRIPTION must have been folded"
    );

    let cal: icalendar::Calendar = text.parse().unwrap();
    assert_eq!(cal.property_value("VERSION"), Some("2.0"));
    assert_eq!(
        cal.property_value("PRODID"),
        Some(spallcast_plan::ics::PRODID)
    );
    let events: Vec<&icalendar::Event> =
        cal.components.iter().filter_map(|c| c.as_event()).collect();
    assert_eq!(events.len(), 2, "one VEVENT per outage");

    let spring = events[0];
    assert_eq!(
        spring.get_summary(),
        Some("Spring shutdown, \"big\" one; phase\\2 (2 bearing replacements)")
    );
    assert_eq!(
        spring.get_start(),
        Some(DatePerhapsTime::Date(d("2027-03-08")))
    );
    // DTEND is exclusive (RFC 5545 §3.6.1): the day after the last outage day.
    assert_eq!(
        spring.get_end(),
        Some(DatePerhapsTime::Date(d("2027-03-13")))
    );
    assert_eq!(
        spring.get_uid(),
        Some("spallcast-outage-2-20270308@plan.spallcast.invalid")
    );
    assert_eq!(
        spring.get_timestamp(),
        Some(Utc.with_ymd_and_hms(2026, 12, 1, 23, 30, 5).unwrap())
    );
    let desc = spring.get_description().unwrap();
    let lines: Vec<&str> = desc.lines().collect();
    assert_eq!(lines[0], "Outage 2027-03-08 to 2027-03-12.");
    assert_eq!(lines[1], "Bearing replacements:");
    assert_eq!(
        lines[2],
        "IN-P1 MNDE (Intake pump 1, motor): replace TCX-209 bearing, grease lubricated; stage 2; replace by 2027-04-20"
    );
    assert_eq!(
        lines[3],
        "IN-P2 MDE (Intake pump 2 — <east>): replace TCX-209 bearing, grease lubricated [done]"
    );
    assert!(lines[4].contains("isolate and lock out"), "{desc}");

    let filters = events[1];
    assert_eq!(
        filters.get_summary(),
        Some("Filter hall stop (1 bearing replacement)")
    );
    assert_eq!(
        filters.get_start(),
        Some(DatePerhapsTime::Date(d("2027-04-05")))
    );
    assert_eq!(
        filters.get_end(),
        Some(DatePerhapsTime::Date(d("2027-04-07")))
    );
    let desc = filters.get_description().unwrap();
    assert!(desc.contains("IN-P3 @DE"), "{desc}");
    assert!(
        !desc.contains("FI-B9"),
        "cancelled entries are not tasks: {desc}"
    );
    // DATE values carry VALUE=DATE (RFC 5545 §3.3.4).
    assert!(text.contains("DTSTART;VALUE=DATE:20270405\r\n"));
}

#[test]
fn html_report_has_the_caution_the_fields_and_small_inline_plots() {
    let board = tricky_board();
    let mut images = ImagesByLife::new();
    let n = 40_000;
    let mut amplitude = vec![0.002; n];
    amplitude[3000] = 0.4;
    images.insert(
        1,
        BearingImages {
            spectrum: Some(SpectrumImage {
                taken_at: "2026-11-14 09:31 +01:00".into(),
                point: "IN-P1-MNDE-H".into(),
                freq_hz: (0..n).map(|i| i as f64 * 0.25).collect(),
                amplitude,
                units: "g peak".into(),
            }),
            trend: Some(TrendImage {
                name: "velocity RMS".into(),
                units: "mm/s".into(),
                points: vec![
                    (d("2026-09-10"), 1.1),
                    (d("2026-10-12"), 1.4),
                    (d("2026-11-14"), 2.2),
                ],
            }),
        },
    );
    let html = String::from_utf8(export_bytes(&board, ExportFormat::Html, &ctx(&images)).unwrap())
        .unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(
        html.contains(&SAFETY_CAUTION.replace('\'', "&#39;")),
        "caution in header"
    );
    assert!(html.contains("Tallow Creek &lt;Water&gt; Works"));
    assert!(!html.contains("<east>"), "text must be escaped");
    assert!(html.contains("Intake pump 2 — &lt;east&gt;"));
    // Outage sections in date order, each bearing with its fields.
    let spring = html
        .find("<h2>Spring shutdown, &quot;big&quot; one; phase\\2</h2>")
        .unwrap();
    let filters = html.find("<h2>Filter hall stop</h2>").unwrap();
    let open = html.find("<h2>Bearings without a slot</h2>").unwrap();
    assert!(spring < filters && filters < open);
    for field in [
        "IN-P1",
        "MNDE",
        "TCX-209",
        "grease",
        "stage s2",
        "2027-04-20",
        "outer-race tones at 3.58x",
    ] {
        assert!(
            html[spring..filters].contains(field),
            "{field} missing in the spring section"
        );
    }
    assert!(
        html[filters..open]
            .contains("Warning: &quot;Filter hall stop&quot; does not take machine IN-P3 down")
    );
    assert!(html[open..].contains("suggested outage: Filter hall stop"));
    assert!(html[open..].contains("unplanned stop"));
    // One spectrum and one trend plot; the 40 000-line spectrum stays small.
    assert_eq!(html.matches("<svg").count(), 2);
    let svg_start = html.find("<svg").unwrap();
    let svg_len = html[svg_start..].find("</svg>").unwrap();
    assert!(svg_len < 16_000, "spectrum SVG is {svg_len} bytes");
    assert!(html.contains("peak 0.400 g peak"));
    assert!(!html.contains("<script"));
}

#[test]
fn export_to_path_writes_atomically_and_names_a_bad_folder() {
    let dir = tempfile::tempdir().unwrap();
    let board = tricky_board();
    let images = ImagesByLife::new();
    let out = dir.path().join("plan.ics");
    export_to_path(&board, ExportFormat::Ics, &ctx(&images), &out).unwrap();
    assert!(
        std::fs::read_to_string(&out)
            .unwrap()
            .starts_with("BEGIN:VCALENDAR\r\n")
    );
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        1,
        "no temporary left"
    );
    let bad = dir.path().join("missing").join("plan.csv");
    let err = export_to_path(&board, ExportFormat::Csv, &ctx(&images), &bad).unwrap_err();
    assert!(err.to_string().contains("plan.csv"), "{err}");
}

//! The plant-file values check, shared by the fuzz target `plant_values` (the fuzz crate depends on
//! this one) and the store's corpus replay test (`crates/store/tests/hardening_plant_corpus.rs`): a
//! valid plant file whose numbers and ids come from the input bytes (any `f64` bit pattern, including
//! NaN, infinities and negatives; ids with control characters, empty ids, duplicate outage names).
//! Whatever is accepted must be usable: speeds finite and positive, ids non-empty without control
//! characters, geometry physically possible, outage names unique; whatever is refused must name the
//! file. Depends only on `spallcast_store`.

use std::fmt::Write as _;
use std::path::Path;

use spallcast_store::PlantFile;

/// Reads fuzzer bytes as values.
struct Values<'a>(&'a [u8]);

impl Values<'_> {
    fn byte(&mut self) -> u8 {
        let Some((&b, rest)) = self.0.split_first() else {
            return 0;
        };
        self.0 = rest;
        b
    }

    /// A float: half of the time one of the edge values, else any bit pattern.
    fn float(&mut self) -> f64 {
        const EDGES: [f64; 12] = [
            0.0,
            -0.0,
            -1.0,
            1.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MIN_POSITIVE,
            1e308,
            90.0,
            95.0,
            1485.0,
        ];
        let pick = self.byte();
        if pick & 1 == 0 {
            return EDGES[usize::from(pick >> 1) % EDGES.len()];
        }
        let mut bits = [0u8; 8];
        for b in &mut bits {
            *b = self.byte();
        }
        f64::from_le_bytes(bits)
    }

    /// An id: usually plain, sometimes empty or with a control character or a quote.
    fn id(&mut self, plain: &str) -> String {
        match self.byte() % 8 {
            0 => String::new(),
            1 => format!("{plain}\u{0}"),
            2 => format!("{plain}\n"),
            3 => format!("{plain}\u{7f}"),
            4 => format!(" {plain}"),
            5 => format!("{plain}\u{1b}[31m"),
            _ => plain.to_owned(),
        }
    }
}

/// A TOML float literal for any `f64` (TOML spells the non-finite ones `nan`, `inf`, `-inf`).
fn toml_float(v: f64) -> String {
    if v.is_nan() {
        "nan".to_owned()
    } else if v.is_infinite() {
        if v > 0.0 { "inf" } else { "-inf" }.to_owned()
    } else {
        format!("{v:?}")
    }
}

/// A TOML basic string with every control character escaped.
fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            // Writing to a `String` cannot fail.
            c if c.is_control() => {
                let _ = write!(out, "\\u{:04X}", u32::from(c));
            }
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// Where the plant file built from the input claims to come from (errors must name it).
pub const PLANT_PATH: &str = "/fuzz/plant-values.toml";

/// Builds the plant file from `data`, parses it and checks the outcome (panics on a violation).
pub fn check(data: &[u8]) {
    let text = plant_text(data);
    let path = Path::new(PLANT_PATH);
    check_parsed(&text, path);
}

/// The plant file the input's bytes describe.
pub fn plant_text(data: &[u8]) -> String {
    let mut v = Values(data);
    let rpm = v.float();
    let bearing_rpm = v.float();
    let elements = v.byte();
    let element_d = v.float();
    let pitch_d = v.float();
    let angle = v.float();
    let machine = v.id("FZ-P1");
    let position = v.id("DE");
    let point = v.id("FZ-P1-DE-H");
    let second_outage = if v.byte() % 4 == 0 {
        "Stop A".to_owned()
    } else {
        v.id("Stop B")
    };
    let with_bearing_rpm = v.byte() % 3 == 0;
    let text = format!(
        r#"[site]
name = "Fuzz works"
timezone_offset = "+00:00"

[[bearing_types]]
designation = "FZ-1"
kind = "deep-groove ball"
rolling_elements = {elements}
element_diameter_mm = {element_d}
pitch_diameter_mm = {pitch_d}
contact_angle_deg = {angle}

[[areas]]
name = "Area"

  [[areas.machines]]
  id = {machine}
  name = "Pump"
  kind = "pump"
  nominal_rpm = {rpm}
  iso_group = 2
  iso_support = "rigid"

    [[areas.machines.bearings]]
    position = {position}
    description = "drive end"
    bearing_type = "FZ-1"
    lubrication = "grease"
    installed = "2024-01-01"
    {bearing_rpm_line}

    [[areas.machines.points]]
    id = {point}
    bearing = {position}
    direction = "H"
    sensor = "accelerometer"

[[outages]]
name = "Stop A"
start = "2027-01-04"
end = "2027-01-08"
areas = ["Area"]

[[outages]]
name = {second}
start = "2027-03-01"
end = "2027-03-02"
areas = ["Area"]
"#,
        element_d = toml_float(element_d),
        pitch_d = toml_float(pitch_d),
        angle = toml_float(angle),
        rpm = toml_float(rpm),
        machine = toml_string(&machine),
        position = toml_string(&position),
        point = toml_string(&point),
        second = toml_string(&second_outage),
        bearing_rpm_line = if with_bearing_rpm {
            format!("nominal_rpm = {}", toml_float(bearing_rpm))
        } else {
            String::new()
        },
    );
    text
}

fn check_parsed(text: &str, path: &Path) {
    match PlantFile::parse(text, path) {
        Err(e) => {
            let message = e.to_string();
            assert!(
                message.contains("/fuzz/plant-values.toml"),
                "error does not name the file: {message}"
            );
        }
        Ok(plant) => {
            let id_ok = |s: &str| !s.trim().is_empty() && !s.chars().any(char::is_control);
            let m = &plant.areas[0].machines[0];
            assert!(
                m.nominal_rpm.is_finite() && m.nominal_rpm > 0.0,
                "accepted rpm {}",
                m.nominal_rpm
            );
            assert!(id_ok(&m.id), "accepted machine id {:?}", m.id);
            let b = &m.bearings[0];
            assert!(id_ok(&b.position), "accepted position {:?}", b.position);
            if let Some(r) = b.nominal_rpm {
                assert!(r.is_finite() && r > 0.0, "accepted bearing rpm {r}");
            }
            assert!(
                id_ok(&m.points[0].id),
                "accepted point id {:?}",
                m.points[0].id
            );
            assert_ne!(
                plant.outages[0].name, plant.outages[1].name,
                "duplicate outage names accepted"
            );
            let t = &plant.bearing_types[0];
            if let Some(f) = t.fault_factors() {
                for x in [f.ftf, f.bsf, f.bpfo, f.bpfi] {
                    assert!(
                        x.is_finite() && x > 0.0,
                        "accepted geometry gives factor {x}: {t:?}"
                    );
                }
                assert!(f.ftf < 1.0, "cage faster than the shaft: {t:?}");
            }
            if let (Some(e), Some(p)) = (t.element_diameter_mm, t.pitch_diameter_mm) {
                assert!(e > 0.0 && p > e, "accepted element {e} mm in pitch {p} mm");
            }
            if let Some(a) = t.contact_angle_deg {
                assert!((0.0..90.0).contains(&a), "accepted contact angle {a}");
            }
        }
    }
}

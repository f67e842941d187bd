//! Spallcast's own colours: a blue-to-violet ramp for the stages (always with the numeral shown), and one
//! hue per fault family for markers. Every colour the window uses is declared here.

use eframe::egui::{self, Color32, RichText};

use spallcast_analysis::FaultKind;

/// Stage 0..=4 colours (0: no defect seen): a ramp from pale slate blue through steel blue and indigo to
/// violet. Neither traffic-light hues nor an alarm code: the numeral carries the meaning and the ramp
/// only helps the eye group stages.
const STAGE_COLOURS: [Color32; 5] = [
    Color32::from_rgb(0x6f, 0x8f, 0xaf),
    Color32::from_rgb(0x3d, 0x7e, 0xc4),
    Color32::from_rgb(0x4f, 0x5c, 0xc8),
    Color32::from_rgb(0x6e, 0x43, 0xbf),
    Color32::from_rgb(0x8e, 0x2c, 0xa8),
];

/// Badge colour when no stage call is stored.
const UNKNOWN_STAGE: Color32 = Color32::from_rgb(0x7a, 0x7f, 0x87);

/// Colour of a stage badge (`None`: no call stored).
pub fn stage_colour(stage: Option<u8>) -> Color32 {
    match stage {
        Some(s @ 0..=4) => STAGE_COLOURS[usize::from(s)],
        _ => UNKNOWN_STAGE,
    }
}

/// Text of a stage badge: the numeral, or an en dash when unknown.
pub fn stage_text(stage: Option<u8>) -> String {
    match stage {
        Some(s @ 0..=4) => s.to_string(),
        _ => "–".to_owned(),
    }
}

/// Draws a small filled badge with the stage numeral; hovering explains it.
pub fn stage_badge_ui(ui: &mut egui::Ui, stage: Option<u8>) -> egui::Response {
    let text = RichText::new(stage_text(stage))
        .strong()
        .monospace()
        .color(Color32::WHITE);
    let hint = match stage {
        Some(0) => "stage 0: no bearing defect seen (latest stored call)".to_owned(),
        Some(s @ 1..=4) => format!("stage {s} of 4 (latest stored call)"),
        _ => "no stage call stored".to_owned(),
    };
    let button = egui::Button::new(text)
        .fill(stage_colour(stage))
        .corner_radius(4.0)
        .sense(egui::Sense::hover());
    ui.add(button).on_hover_text(hint)
}

/// Colour for one plotted spectrum out of `count`, newest (index `count - 1`) most saturated.
pub fn curve_colour(index: usize, count: usize) -> Color32 {
    // Older readings fade toward a pale grey-teal and the newest is a deep teal, so the eye finds the
    // latest month first and the marker hues stay distinct from every curve.
    const NEWEST: [f32; 3] = [0.05, 0.45, 0.55];
    const OLDEST: [f32; 3] = [0.62, 0.70, 0.72];
    let t = if count <= 1 {
        1.0
    } else {
        index as f32 / (count - 1) as f32
    };
    let mix = |a: f32, b: f32| ((a + (b - a) * t) * 255.0).round() as u8;
    Color32::from_rgb(
        mix(OLDEST[0], NEWEST[0]),
        mix(OLDEST[1], NEWEST[1]),
        mix(OLDEST[2], NEWEST[2]),
    )
}

/// Marker colour of a fault family (`None`: shaft harmonics).
pub fn fault_colour(kind: Option<FaultKind>) -> Color32 {
    match kind {
        None => Color32::from_rgb(0x55, 0x55, 0x55),
        Some(FaultKind::OuterRace) => Color32::from_rgb(0xc2, 0x41, 0x8e),
        Some(FaultKind::InnerRace) => Color32::from_rgb(0x1f, 0x8a, 0x70),
        Some(FaultKind::RollingElement) => Color32::from_rgb(0xb0, 0x6f, 0x12),
        Some(FaultKind::Cage) => Color32::from_rgb(0x5a, 0x6b, 0x1c),
    }
}

/// ISO 20816-3 zone boundary line colour.
pub const ZONE_LINE: Color32 = Color32::from_rgb(0x8a, 0x6d, 0x3b);

/// Replacement event line colour.
pub const REPLACEMENT_LINE: Color32 = Color32::from_rgb(0x33, 0x33, 0x33);

/// Forecast projection colour.
pub const FORECAST: Color32 = Color32::from_rgb(0x6e, 0x43, 0xbf);

/// Background of the caution strip.
pub const CAUTION_FILL: Color32 = Color32::from_rgb(0xf3, 0xec, 0xd8);

/// Text of the caution strip.
pub const CAUTION_TEXT: Color32 = Color32::from_rgb(0x4a, 0x3b, 0x12);

/// Colours of the indicator trend lines, cycled.
pub const TREND_COLOURS: [Color32; 6] = [
    Color32::from_rgb(0x1f, 0x6f, 0xb4),
    Color32::from_rgb(0x8e, 0x2c, 0xa8),
    Color32::from_rgb(0x1f, 0x8a, 0x70),
    Color32::from_rgb(0xb0, 0x6f, 0x12),
    Color32::from_rgb(0xc2, 0x41, 0x8e),
    Color32::from_rgb(0x55, 0x55, 0x55),
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_stage_has_its_own_colour_and_numeral() {
        let colours: Vec<Color32> = (0..=4).map(|s| stage_colour(Some(s))).collect();
        for (i, a) in colours.iter().enumerate() {
            for b in &colours[i + 1..] {
                assert_ne!(a, b);
            }
            assert_ne!(*a, stage_colour(None));
        }
        assert_eq!(stage_text(Some(3)), "3");
        assert_eq!(stage_text(None), "–");
        assert_eq!(stage_text(Some(9)), "–");
    }

    // The ramp stays in the blue-violet half of the hue circle: blue is the largest channel or a close
    // second to red (violet), and green never dominates (a traffic-light scheme would need green).
    #[test]
    fn stage_ramp_is_blue_to_violet() {
        for s in 0..=4 {
            let c = stage_colour(Some(s));
            assert!(c.b() >= c.g(), "stage {s}: {c:?}");
            assert!(c.b() >= c.r(), "stage {s}: {c:?}");
        }
    }
}

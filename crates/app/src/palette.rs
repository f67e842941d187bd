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

/// Colours of the older months, counted back from the newest (the month before it first): copper,
/// sky blue, dusty plum, khaki, grey teal, rose. Distinct hues of our own, not shades of one.
const MONTH_COLOURS: [Color32; 6] = [
    Color32::from_rgb(0xb5, 0x6a, 0x4a),
    Color32::from_rgb(0x4f, 0x8f, 0xc0),
    Color32::from_rgb(0x9a, 0x6f, 0x9e),
    Color32::from_rgb(0xa8, 0x9a, 0x5a),
    Color32::from_rgb(0x4f, 0x9a, 0x96),
    Color32::from_rgb(0xb0, 0x5a, 0x78),
];

/// The newest month's colour: dark ink blue (drawn thicker too).
const NEWEST_MONTH: Color32 = Color32::from_rgb(0x12, 0x2c, 0x4f);

/// Colour for one plotted spectrum out of `count` (index 0 the oldest): the newest is ink blue and
/// the older ones take distinct hues counted back from it, so a month keeps its colour relation to
/// the newest whatever the count.
pub fn curve_colour(index: usize, count: usize) -> Color32 {
    if count == 0 || index + 1 >= count {
        return NEWEST_MONTH;
    }
    let back = count - 1 - index; // 1 for the month before the newest
    MONTH_COLOURS[(back - 1) % MONTH_COLOURS.len()]
}

/// Demodulation-band edge lines on the acceleration spectrum.
pub const DEMOD_BAND: Color32 = Color32::from_rgb(0x2b, 0x6c, 0x8a);

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

/// The analyst's notes on the life trend.
pub const NOTE_LINE: Color32 = Color32::from_rgb(0x1f, 0x7a, 0x6a);

/// Forecast projection colour.
pub const FORECAST: Color32 = Color32::from_rgb(0x6e, 0x43, 0xbf);

/// End-of-life projections in the "how right were we" plot (replace-by ones use [`FORECAST`]).
pub const END_OF_LIFE: Color32 = Color32::from_rgb(0xa3, 0x4a, 0x28);

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

    /// Up to seven months every curve has its own colour, and no two differ only in lightness of one
    /// hue: each pair differs by at least 40 in some channel after removing overall brightness.
    #[test]
    fn months_differ_by_hue_not_only_shade() {
        let colours: Vec<Color32> = (0..7).map(|i| curve_colour(i, 7)).collect();
        for (i, a) in colours.iter().enumerate() {
            for b in &colours[i + 1..] {
                let mean =
                    |c: &Color32| (i32::from(c.r()) + i32::from(c.g()) + i32::from(c.b())) / 3;
                let (ma, mb) = (mean(a), mean(b));
                let d = [
                    (i32::from(a.r()) - ma) - (i32::from(b.r()) - mb),
                    (i32::from(a.g()) - ma) - (i32::from(b.g()) - mb),
                    (i32::from(a.b()) - ma) - (i32::from(b.b()) - mb),
                ];
                assert!(d.iter().any(|x| x.abs() >= 25), "{a:?} vs {b:?}");
            }
        }
        assert_eq!(curve_colour(2, 3), NEWEST_MONTH);
        assert_eq!(
            curve_colour(1, 3),
            curve_colour(4, 6),
            "the month before the newest"
        );
    }

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

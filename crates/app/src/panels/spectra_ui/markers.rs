//! Which fault-frequency markers are shown, and the display controls beside the plot.

use eframe::egui;
use spallcast_analysis::{FaultKind, FaultMarker, MarkerFamily, fault_markers};

use crate::model::{BearingHistory, SharedSpectra, SpectrumKind};
use crate::palette;
use crate::settings::{
    AmplitudeScale, FreqAxis, Layout, MarkerSettings, SpectraSettings, fault_label,
};

/// The fault family a marker belongs to (`None` for shaft harmonics).
pub(super) fn marker_kind(m: &FaultMarker) -> Option<FaultKind> {
    match m.family {
        MarkerFamily::Shaft => None,
        MarkerFamily::Fault(k) | MarkerFamily::Sideband(k) => Some(k),
    }
}

/// Whether the settings show this marker.
pub fn marker_shown(settings: &MarkerSettings, m: &FaultMarker) -> bool {
    match m.family {
        MarkerFamily::Shaft => settings.shaft,
        MarkerFamily::Fault(k) => settings.toggle(k).harmonics,
        MarkerFamily::Sideband(k) => settings.toggle(k).sidebands,
    }
}

pub(super) fn markers_ui(ui: &mut egui::Ui, m: &mut MarkerSettings, factors_known: bool) {
    ui.horizontal_wrapped(|ui| {
        ui.label("Markers:");
        if !factors_known {
            ui.label(egui::RichText::new("bearing type unknown: no fault frequencies").italics());
            return;
        }
        ui.checkbox(&mut m.shaft, "1x harmonics");
        for kind in FaultKind::ALL {
            let colour = palette::fault_colour(Some(kind));
            let t = m.toggle_mut(kind);
            ui.checkbox(
                &mut t.harmonics,
                egui::RichText::new(fault_label(kind)).color(colour),
            );
            ui.checkbox(&mut t.sidebands, format!("{} sidebands", fault_label(kind)));
            ui.add_space(6.0);
        }
        ui.add(
            egui::DragValue::new(&mut m.harmonic_count)
                .range(1..=20)
                .prefix("harmonics "),
        );
        ui.add(
            egui::DragValue::new(&mut m.sideband_pairs)
                .range(0..=5)
                .prefix("sideband pairs "),
        );
    });
}

/// Spectrum kind, amplitude scale, frequency unit and layout.
pub(super) fn controls_ui(ui: &mut egui::Ui, settings: &mut SpectraSettings) {
    ui.horizontal_wrapped(|ui| {
        for kind in SpectrumKind::ALL {
            ui.selectable_value(&mut settings.kind, kind, kind.label());
        }
        ui.separator();
        ui.selectable_value(&mut settings.scale, AmplitudeScale::Linear, "Linear");
        ui.selectable_value(&mut settings.scale, AmplitudeScale::Log, "Log");
        ui.separator();
        for axis in [FreqAxis::Hz, FreqAxis::Cpm, FreqAxis::Orders] {
            ui.selectable_value(&mut settings.axis, axis, axis.label());
        }
        ui.separator();
        ui.selectable_value(&mut settings.layout, Layout::Overlay, "Overlaid");
        ui.selectable_value(&mut settings.layout, Layout::Stacked, "Stacked in time");
    });
}

/// The fault-frequency markers switched on, at the newest reading's shaft speed, up to its top line.
pub(super) fn shown_markers(
    settings: &SpectraSettings,
    history: &BearingHistory,
    newest: Option<&SharedSpectra>,
    ref_shaft_hz: f64,
) -> Vec<FaultMarker> {
    match (history.factors, newest) {
        (Some(f), Some(s)) if ref_shaft_hz > 0.0 => {
            let m = &settings.markers;
            fault_markers(
                &f.at_shaft_hz(ref_shaft_hz),
                m.harmonic_count,
                m.sideband_pairs,
                s.get(settings.kind).max_hz(),
            )
            .into_iter()
            .filter(|mk| marker_shown(m, mk))
            .collect()
        }
        _ => Vec::new(),
    }
}

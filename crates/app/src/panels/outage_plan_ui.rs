//! Reserved for the outage-plan calendar. The lead builds it; until then [`crate::settings::View::OutagePlan`]
//! is not offered as a tab and this panel only says so.

use eframe::egui;

/// Placeholder panel for the outage-plan calendar (not built in this crate yet).
#[derive(Debug, Default)]
pub struct OutagePlanPanel;

impl OutagePlanPanel {
    #[allow(
        clippy::unused_self,
        reason = "one struct per panel; this one keeps no state yet"
    )]
    /// Draws the panel.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        ui.heading("Outage plan");
        ui.label("The outage-plan calendar is not part of this build.");
    }
}

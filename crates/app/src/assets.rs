//! Files the window ships from the top-level `assets/` folder, compiled in: the application icon
//! (`assets/icon/spallcast.png`, drawn by `assets/icon/make_icon.py`) and `DejaVu Sans`
//! (`assets/fonts/`, Bitstream Vera licence beside it), installed as a fallback after egui's own
//! fonts so arrows, the warning sign and other symbols the UI uses are drawn.

use std::sync::Arc;

use eframe::egui;

/// The application icon, PNG.
pub const ICON_PNG: &[u8] = include_bytes!("../../../assets/icon/spallcast.png");

/// `DejaVu Sans` 2.37 (Debian fonts-dejavu-core), TrueType.
pub const FALLBACK_FONT: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");

/// Name of the fallback font in egui's font table.
pub const FALLBACK_FONT_NAME: &str = "DejaVuSans";

/// Adds `DejaVu Sans` after egui's fonts in the proportional and monospace families.
pub fn install_fonts(ctx: &egui::Context) {
    let mut fonts = egui::FontDefinitions::default();
    fonts.font_data.insert(
        FALLBACK_FONT_NAME.to_owned(),
        Arc::new(egui::FontData::from_static(FALLBACK_FONT)),
    );
    for family in [egui::FontFamily::Proportional, egui::FontFamily::Monospace] {
        fonts
            .families
            .entry(family)
            .or_default()
            .push(FALLBACK_FONT_NAME.to_owned());
    }
    ctx.set_fonts(fonts);
}

/// The window icon, or `None` if the compiled-in PNG could not be decoded.
pub fn app_icon() -> Option<egui::IconData> {
    eframe::icon_data::from_png_bytes(ICON_PNG).ok()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn icon_decodes_to_a_square_rgba_image() {
        let icon = app_icon().unwrap();
        assert_eq!((icon.width, icon.height), (128, 128));
        assert_eq!(icon.rgba.len(), 128 * 128 * 4);
        // Not blank: more than two distinct colours.
        let mut colours: Vec<&[u8]> = icon.rgba.chunks(4).collect();
        colours.sort_unstable();
        colours.dedup();
        assert!(colours.len() > 2, "{} colours", colours.len());
    }
}

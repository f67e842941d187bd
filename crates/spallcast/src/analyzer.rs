//! The reading analyzer the import uses: the analysis crate's full diagnosis (see
//! `spallcast_pipeline::SpallcastAnalyzer`).

use spallcast_store::ReadingAnalyzer;

/// The analyzer every import in this binary uses.
pub fn default_analyzer() -> Box<dyn ReadingAnalyzer> {
    Box::new(spallcast_pipeline::SpallcastAnalyzer)
}

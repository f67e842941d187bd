//! One struct per panel, each with a `ui` method; panels push [`crate::actions::Action`]s.

pub mod bearing_ui;
pub mod changes_ui;
pub mod spectra_ui;
pub mod track_record_ui;
pub mod tree_ui;
pub mod trend_ui;
pub mod waveform_ui;

//! Per-reading caches of computed spectra and loaded waveforms, filled by the data worker.

use std::collections::HashMap;
use std::sync::Arc;

use crate::model::{ReadingId, SharedSpectra, Waveform};

/// State of one cached item.
#[derive(Debug, Clone)]
pub enum Slot<T> {
    /// Requested from the worker, not back yet.
    Pending,
    /// Ready.
    Ready(T),
    /// The worker failed; the message says why.
    Failed(String),
}

/// Spectra and waveforms by reading. Cleared when another database is opened or an import lands.
#[derive(Debug, Default)]
pub struct ReadingCache {
    /// Spectra of each reading.
    pub spectra: HashMap<ReadingId, Slot<SharedSpectra>>,
    /// Samples of each reading.
    pub waveforms: HashMap<ReadingId, Slot<Arc<Waveform>>>,
}

impl ReadingCache {
    /// The spectra of a reading, if computed.
    pub fn spectra_of(&self, id: ReadingId) -> Option<&SharedSpectra> {
        match self.spectra.get(&id) {
            Some(Slot::Ready(s)) => Some(s),
            _ => None,
        }
    }

    /// The waveform of a reading, if loaded.
    pub fn waveform_of(&self, id: ReadingId) -> Option<&Arc<Waveform>> {
        match self.waveforms.get(&id) {
            Some(Slot::Ready(w)) => Some(w),
            _ => None,
        }
    }

    /// Whether anything is still being computed.
    pub fn any_pending(&self) -> bool {
        self.spectra.values().any(|s| matches!(s, Slot::Pending))
            || self.waveforms.values().any(|s| matches!(s, Slot::Pending))
    }

    /// Forgets everything.
    pub fn clear(&mut self) {
        self.spectra.clear();
        self.waveforms.clear();
    }
}

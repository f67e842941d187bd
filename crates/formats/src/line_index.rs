//! Line numbers for csv records.
//!
//! The csv crate reports a record's position as where it started reading, before skipping blank
//! (and comment) lines, so its line count can point above the record. This finds the true line.

/// Counts lines forward through one byte buffer; positions must be asked in increasing order for
/// the counting to stay linear (earlier positions still give correct answers, just more slowly).
pub(crate) struct LineIndex<'a> {
    bytes: &'a [u8],
    comment: Option<u8>,
    pos: usize,
    line: u64,
}

impl<'a> LineIndex<'a> {
    pub(crate) fn new(bytes: &'a [u8], comment: Option<u8>) -> Self {
        Self {
            bytes,
            comment,
            pos: 0,
            line: 1,
        }
    }

    /// 1-based line of the record whose reading started at byte `start`.
    pub(crate) fn line_of(&mut self, start: u64) -> u64 {
        let mut at = usize::try_from(start)
            .unwrap_or(usize::MAX)
            .min(self.bytes.len());
        loop {
            match self.bytes.get(at) {
                Some(b'\r' | b'\n') => at += 1,
                Some(&c) if Some(c) == self.comment => {
                    at = self.bytes[at..]
                        .iter()
                        .position(|&b| b == b'\n')
                        .map_or(self.bytes.len(), |p| at + p + 1);
                }
                _ => break,
            }
        }
        if at < self.pos {
            self.pos = 0;
            self.line = 1;
        }
        self.line += self.bytes[self.pos..at].split(|&b| b == b'\n').count() as u64 - 1;
        self.pos = at;
        self.line
    }
}

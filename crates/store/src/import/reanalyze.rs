//! Re-analysis of the readings an older analyzer version (or none) left results for.

use rayon::prelude::*;

use super::write::write_results;
use super::{machine_group, support};
use crate::analyzer::{AnalysisInput, AnalysisOutput, AnalyzeError, ReadingAnalyzer};
use crate::error::Result;
use crate::queries::factors_from_row;
use crate::{Store, now_text};

impl Store {
    /// Recomputes the results of every reading analysed by another analyzer version (or not at all),
    /// in parallel chunks, each reading's results replaced in its own transaction. Readings stored
    /// without a waveform are left alone. Returns the number of readings re-analysed;
    /// `progress(done, total)` after each chunk.
    pub fn reanalyze_stale(
        &mut self,
        analyzer: &dyn ReadingAnalyzer,
        progress: &mut dyn FnMut(usize, usize),
    ) -> Result<usize> {
        let version = analyzer.version();
        let ids: Vec<i64> = self
            .conn
            .prepare(
                "SELECT r.id FROM reading r LEFT JOIN analysis a ON a.reading_id = r.id
                 WHERE EXISTS (SELECT 1 FROM waveform w WHERE w.reading_id = r.id)
                   AND a.version IS NOT ?1 ORDER BY r.id",
            )?
            .query_map([&version], |r| r.get(0))?
            .collect::<Result<Vec<_>, _>>()?;
        let total = ids.len();
        let chunk = 2 * rayon::current_num_threads().max(1);
        let mut done = 0;
        let mut failed = 0;
        progress(0, total);
        for batch in ids.chunks(chunk) {
            let mut loaded = Vec::with_capacity(batch.len());
            for &id in batch {
                loaded.push(self.load_for_analysis(id)?);
            }
            let results: Vec<(i64, std::result::Result<AnalysisOutput, AnalyzeError>)> = loaded
                .into_par_iter()
                .map(|(id, samples, ctx)| {
                    let input = AnalysisInput {
                        samples_g: &samples,
                        ..ctx
                    };
                    (id, analyzer.analyze(&input))
                })
                .collect();
            for (id, result) in results {
                match result {
                    Ok(mut out) => {
                        out.scalars.retain(|_, v| v.is_finite());
                        let tx = self
                            .conn
                            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
                        write_results(&tx, id, &out, &version, &now_text())?;
                        tx.commit()?;
                        done += 1;
                    }
                    Err(_) => failed += 1,
                }
            }
            progress(done + failed, total);
        }
        Ok(done)
    }

    fn load_for_analysis(&self, id: i64) -> Result<(i64, Vec<f32>, AnalysisInput<'static>)> {
        let (blob, rate, shaft, group, support, factors) = self
            .conn
            .prepare_cached(
                "SELECT (SELECT w.samples FROM waveform w WHERE w.reading_id = r.id), r.sample_rate_hz,
                        r.shaft_hz, m.iso_group, m.iso_support,
                        bt.ftf, bt.bsf, bt.bpfo, bt.bpfi, bt.rolling_elements, bt.element_diameter_mm,
                        bt.pitch_diameter_mm, bt.contact_angle_deg
                 FROM reading r JOIN bearing_position bp ON bp.id = r.position_id
                 JOIN machine m ON m.id = bp.machine_id JOIN bearing_type bt ON bt.id = bp.bearing_type_id
                 WHERE r.id = ?1",
            )?
            .query_row([id], |r| {
                Ok((
                    r.get::<_, Vec<u8>>(0)?,
                    r.get::<_, f64>(1)?,
                    r.get::<_, f64>(2)?,
                    r.get::<_, u8>(3)?,
                    r.get::<_, String>(4)?,
                    factors_from_row(r, 5)?,
                ))
            })?;
        let ctx = AnalysisInput {
            samples_g: &[],
            sample_rate_hz: rate,
            shaft_hz: shaft,
            factors,
            iso_group: machine_group(group),
            iso_support: self::support(&support),
        };
        Ok((id, crate::queries::decode_waveform(&blob), ctx))
    }
}

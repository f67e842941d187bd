//! Read queries for the GUI and the planner. Each is a handful of indexed statements.

use std::collections::{BTreeMap, HashMap};

use chrono::NaiveDate;
use rusqlite::{OptionalExtension, Row};

use crate::Store;
use crate::analyzer::FaultFactors;
use crate::error::{Result, StoreError};
use crate::planning::{StageCall, stage_call_from_row};
use crate::plant::{Direction, IsoSupport, Lubrication, MachineKind};

pub use crate::records::{
    AnalysisRecord, AreaNode, BearingNode, BearingState, ImportLogEntry, LifeInfo, LifeReadings,
    MachineNode, PlantTree, PointNode, ReadingMeta, RouteDay, TrendPoint, Waveform,
};

const READING_COLUMNS: &str = "r.id, r.point_id, pt.tag, pt.direction, r.position_id, m.tag, bp.position, r.life_id,
    r.taken_at_utc, r.utc_offset_s, r.route_day, r.shaft_hz, r.sample_rate_hz, r.units, r.sample_count,
    r.source_file, r.content_sha256, r.suspect, r.clipped_fraction, a.version,
    EXISTS (SELECT 1 FROM baseline_mark b WHERE b.reading_id = r.id)";
const READING_JOINS: &str = "FROM reading r JOIN point pt ON pt.id = r.point_id
    JOIN bearing_position bp ON bp.id = r.position_id JOIN machine m ON m.id = bp.machine_id
    LEFT JOIN analysis a ON a.reading_id = r.id";

type RawMeta = (ReadingMetaNoTime, String, i32);

#[derive(Debug)]
struct ReadingMetaNoTime {
    id: i64,
    point_id: i64,
    point: String,
    direction: String,
    position_id: i64,
    machine: String,
    position: String,
    life_id: Option<i64>,
    route_day: NaiveDate,
    shaft_hz: f64,
    sample_rate_hz: f64,
    units: String,
    sample_count: i64,
    source_file: String,
    content_sha256: String,
    suspect: Option<String>,
    clipped_fraction: f64,
    analysis_version: Option<String>,
    baseline: bool,
}

fn raw_meta(r: &Row<'_>) -> rusqlite::Result<RawMeta> {
    Ok((
        ReadingMetaNoTime {
            id: r.get(0)?,
            point_id: r.get(1)?,
            point: r.get(2)?,
            direction: r.get(3)?,
            position_id: r.get(4)?,
            machine: r.get(5)?,
            position: r.get(6)?,
            life_id: r.get(7)?,
            route_day: r.get(10)?,
            shaft_hz: r.get(11)?,
            sample_rate_hz: r.get(12)?,
            units: r.get(13)?,
            sample_count: r.get(14)?,
            source_file: r.get(15)?,
            content_sha256: r.get(16)?,
            suspect: r.get(17)?,
            clipped_fraction: r.get(18)?,
            analysis_version: r.get(19)?,
            baseline: r.get(20)?,
        },
        r.get(8)?,
        r.get(9)?,
    ))
}

fn finish_meta(raw: RawMeta) -> Result<ReadingMeta> {
    let (m, utc, offset) = raw;
    Ok(ReadingMeta {
        id: m.id,
        point_id: m.point_id,
        point: m.point,
        direction: Direction::parse(&m.direction).unwrap_or(Direction::H),
        position_id: m.position_id,
        machine: m.machine,
        position: m.position,
        life_id: m.life_id,
        taken_at: crate::local_time(&utc, offset)?,
        route_day: m.route_day,
        shaft_hz: m.shaft_hz,
        sample_rate_hz: m.sample_rate_hz,
        units: m.units,
        sample_count: usize::try_from(m.sample_count).unwrap_or(0),
        source_file: m.source_file,
        content_sha256: m.content_sha256,
        suspect: m.suspect,
        clipped_fraction: m.clipped_fraction,
        analysis_version: m.analysis_version,
        baseline: m.baseline,
    })
}

fn life_from_row(r: &Row<'_>) -> rusqlite::Result<LifeInfo> {
    Ok(LifeInfo {
        id: r.get(0)?,
        position_id: r.get(1)?,
        installed: r.get(2)?,
        removed: r.get(3)?,
        found_condition: r.get(4)?,
    })
}

/// Decodes a waveform BLOB (f32 little-endian).
pub(crate) fn decode_waveform(blob: &[u8]) -> Vec<f32> {
    blob.chunks_exact(4)
        .map(|c| f32::from_le_bytes([c[0], c[1], c[2], c[3]]))
        .collect()
}

impl Store {
    /// The plant hierarchy: areas → machines → bearing positions → points, in plant-file order.
    pub fn plant_tree(&self) -> Result<PlantTree> {
        let c = &self.conn;
        let site_name: String = c
            .query_row("SELECT name FROM site WHERE id = 1", [], |r| r.get(0))
            .optional()?
            .unwrap_or_default();
        let mut points: HashMap<i64, Vec<PointNode>> = HashMap::new();
        let mut stmt = c.prepare(
            "SELECT id, position_id, tag, direction, sensor, sensitivity_mv_per_g FROM point ORDER BY sort_order, id",
        )?;
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            points.entry(r.get(1)?).or_default().push(PointNode {
                id: r.get(0)?,
                tag: r.get(2)?,
                direction: Direction::parse(&r.get::<_, String>(3)?).unwrap_or(Direction::H),
                sensor: r.get(4)?,
                sensitivity_mv_per_g: r.get(5)?,
            });
        }
        let mut bearings: HashMap<i64, Vec<BearingNode>> = HashMap::new();
        let mut stmt = c.prepare(
            "SELECT bp.id, bp.machine_id, bp.position, bp.description, bt.designation, bt.ftf, bt.bsf, bt.bpfo, bt.bpfi,
                    bt.rolling_elements, bt.element_diameter_mm, bt.pitch_diameter_mm, bt.contact_angle_deg,
                    bp.lubrication, coalesce(bp.nominal_rpm, m.nominal_rpm),
                    (SELECT l.id FROM bearing_life l WHERE l.position_id = bp.id AND l.removed IS NULL
                     ORDER BY l.installed DESC LIMIT 1)
             FROM bearing_position bp JOIN bearing_type bt ON bt.id = bp.bearing_type_id
             JOIN machine m ON m.id = bp.machine_id ORDER BY bp.sort_order, bp.id",
        )?;
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            let id: i64 = r.get(0)?;
            bearings.entry(r.get(1)?).or_default().push(BearingNode {
                position_id: id,
                position: r.get(2)?,
                description: r.get(3)?,
                bearing_type: r.get(4)?,
                factors: factors_from_row(r, 5)?,
                lubrication: Lubrication::parse(&r.get::<_, String>(13)?)
                    .unwrap_or(Lubrication::Grease),
                nominal_rpm: r.get(14)?,
                current_life_id: r.get(15)?,
                points: points.remove(&id).unwrap_or_default(),
            });
        }
        let mut machines: HashMap<i64, Vec<MachineNode>> = HashMap::new();
        let mut stmt = c.prepare(
            "SELECT id, area_id, tag, name, kind, nominal_rpm, iso_group, iso_support FROM machine ORDER BY sort_order, id",
        )?;
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            let id: i64 = r.get(0)?;
            machines.entry(r.get(1)?).or_default().push(MachineNode {
                id,
                tag: r.get(2)?,
                name: r.get(3)?,
                kind: MachineKind::parse(&r.get::<_, String>(4)?).unwrap_or(MachineKind::Other),
                nominal_rpm: r.get(5)?,
                iso_group: r.get(6)?,
                iso_support: IsoSupport::parse(&r.get::<_, String>(7)?)
                    .unwrap_or(IsoSupport::Rigid),
                bearings: bearings.remove(&id).unwrap_or_default(),
            });
        }
        let mut areas = Vec::new();
        let mut stmt = c.prepare("SELECT id, name FROM area ORDER BY sort_order, id")?;
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            let id: i64 = r.get(0)?;
            areas.push(AreaNode {
                id,
                name: r.get(1)?,
                machines: machines.remove(&id).unwrap_or_default(),
            });
        }
        Ok(PlantTree { site_name, areas })
    }

    /// Latest state of every bearing position: current life, last reading and its scalars, latest
    /// stage call. Ordered as the plant tree.
    ///
    /// Two set-based statements whatever the plant's size (positions with their latest reading and
    /// call found through indexes; the latest calls), not a query per bearing. A reading's scalars are
    /// read with [`Store::scalars`] when wanted: at ~60 per reading they were most of the cost.
    pub fn latest_states(&self) -> Result<Vec<BearingState>> {
        const LAST_READING: &str = "(SELECT r.id FROM reading r WHERE r.position_id = bp.id
                                     ORDER BY r.taken_at_utc DESC, r.id DESC LIMIT 1)";
        const LAST_CALL: &str = "(SELECT s.reading_id FROM stage_call s WHERE s.position_id = bp.id
                                  ORDER BY s.taken_at_utc DESC, s.reading_id DESC LIMIT 1)";
        let c = &self.conn;
        let mut calls: HashMap<i64, StageCall> = HashMap::new();
        let mut stmt = c.prepare(&format!(
            "SELECT reading_id, stage, version, evidence, called_at FROM stage_call
             WHERE reading_id IN (SELECT {LAST_CALL} FROM bearing_position bp)"
        ))?;
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            let call =
                stage_call_from_row((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?, r.get(4)?))?;
            calls.insert(call.reading_id, call);
        }
        let mut stmt = c.prepare(&format!(
            "SELECT bp.id, a.name, m.tag, m.name, bp.position, bp.lubrication,
                    l.id, l.position_id, l.installed, l.removed, l.found_condition,
                    last.id, last.taken_at_utc, last.utc_offset_s, {LAST_CALL}
             FROM bearing_position bp JOIN machine m ON m.id = bp.machine_id JOIN area a ON a.id = m.area_id
             LEFT JOIN bearing_life l ON l.id = (SELECT l2.id FROM bearing_life l2 WHERE l2.position_id = bp.id
                                                 ORDER BY l2.installed DESC LIMIT 1)
             LEFT JOIN reading last ON last.id = {LAST_READING}
             ORDER BY a.sort_order, a.id, m.sort_order, m.id, bp.sort_order, bp.id"
        ))?;
        let mut out = Vec::new();
        let mut rows = stmt.query([])?;
        while let Some(r) = rows.next()? {
            let life = match r.get::<_, Option<i64>>(6)? {
                Some(id) => Some(LifeInfo {
                    id,
                    position_id: r.get(7)?,
                    installed: r.get(8)?,
                    removed: r.get(9)?,
                    found_condition: r.get(10)?,
                }),
                None => None,
            };
            let last_reading_id: Option<i64> = r.get(11)?;
            let last_reading_at = match (
                r.get::<_, Option<String>>(12)?,
                r.get::<_, Option<i32>>(13)?,
            ) {
                (Some(utc), Some(off)) => match crate::local_time(&utc, off) {
                    Ok(t) => Some(t),
                    Err(e) => {
                        self.skip_row(format!(
                            "reading {} left out: {e}",
                            last_reading_id.unwrap_or_default()
                        ));
                        None
                    }
                },
                _ => None,
            };
            let latest_stage = r
                .get::<_, Option<i64>>(14)?
                .and_then(|id| calls.remove(&id));
            out.push(BearingState {
                position_id: r.get(0)?,
                area: r.get(1)?,
                machine: r.get(2)?,
                machine_name: r.get(3)?,
                position: r.get(4)?,
                lubrication: Lubrication::parse(&r.get::<_, String>(5)?)
                    .unwrap_or(Lubrication::Grease),
                life,
                last_reading_id,
                last_reading_at,
                latest_stage,
            });
        }
        Ok(out)
    }

    /// Trend series of one scalar over one bearing life (all its points), oldest first.
    pub fn trend(&self, life_id: i64, scalar: &str) -> Result<Vec<TrendPoint>> {
        let mut stmt = self.conn.prepare_cached(
            "SELECT r.id, r.taken_at_utc, r.utc_offset_s, pt.tag, pt.direction, s.value
             FROM reading r JOIN reading_scalar s ON s.reading_id = r.id AND s.name = ?2
             JOIN point pt ON pt.id = r.point_id
             WHERE r.life_id = ?1 ORDER BY r.taken_at_utc, r.id",
        )?;
        let rows = stmt
            .query_map(rusqlite::params![life_id, scalar], |r| {
                Ok((
                    r.get::<_, i64>(0)?,
                    r.get::<_, String>(1)?,
                    r.get::<_, i32>(2)?,
                    r.get(3)?,
                    r.get::<_, String>(4)?,
                    r.get(5)?,
                ))
            })?
            .collect::<Result<Vec<_>, _>>()?;
        let mut out = Vec::with_capacity(rows.len());
        for (reading_id, utc, off, point, dir, value) in rows {
            match crate::local_time(&utc, off) {
                Ok(taken_at) => out.push(TrendPoint {
                    reading_id,
                    taken_at,
                    point,
                    direction: Direction::parse(&dir).unwrap_or(Direction::H),
                    value,
                }),
                Err(e) => self.skip_row(format!("reading {reading_id} left out: {e}")),
            }
        }
        Ok(out)
    }

    /// The scalars (indicators) stored for one reading, by name.
    pub fn scalars(&self, reading_id: i64) -> Result<BTreeMap<String, f64>> {
        let mut stmt = self
            .conn
            .prepare_cached("SELECT name, value FROM reading_scalar WHERE reading_id = ?1")?;
        let rows = stmt.query_map([reading_id], |r| Ok((r.get(0)?, r.get(1)?)))?;
        Ok(rows.collect::<Result<BTreeMap<_, _>, _>>()?)
    }

    /// Names of all scalars stored (for trend pickers), sorted.
    pub fn scalar_names(&self) -> Result<Vec<String>> {
        let mut stmt = self
            .conn
            .prepare("SELECT DISTINCT name FROM reading_scalar ORDER BY name")?;
        let rows = stmt.query_map([], |r| r.get(0))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Metadata of one reading.
    pub fn reading(&self, reading_id: i64) -> Result<ReadingMeta> {
        let sql = format!("SELECT {READING_COLUMNS} {READING_JOINS} WHERE r.id = ?1");
        let raw = self
            .conn
            .prepare_cached(&sql)?
            .query_row([reading_id], raw_meta)
            .optional()?
            .ok_or_else(|| StoreError::NotFound(format!("no reading with id {reading_id}")))?;
        finish_meta(raw)
    }

    /// Waveforms and metadata of the chosen readings, in the order asked. Unknown ids are an error.
    pub fn waveforms(&self, reading_ids: &[i64]) -> Result<Vec<Waveform>> {
        let mut out = Vec::with_capacity(reading_ids.len());
        for &id in reading_ids {
            let meta = self.reading(id)?;
            let blob: Option<Vec<u8>> = self
                .conn
                .prepare_cached("SELECT samples FROM waveform WHERE reading_id = ?1")?
                .query_row([id], |r| r.get(0))
                .optional()?;
            out.push(Waveform {
                meta,
                samples_g: blob.as_deref().map(decode_waveform).unwrap_or_default(),
            });
        }
        Ok(out)
    }

    /// Readings of one route day (local date), by time.
    pub fn readings_of_day(&self, day: NaiveDate) -> Result<Vec<ReadingMeta>> {
        self.readings_where("r.route_day = ?1 ORDER BY r.taken_at_utc, r.id", &day)
    }

    /// Readings of one bearing position, oldest first.
    pub fn readings_of_position(&self, position_id: i64) -> Result<Vec<ReadingMeta>> {
        self.readings_where(
            "r.position_id = ?1 ORDER BY r.taken_at_utc, r.id",
            &position_id,
        )
    }

    fn readings_where(
        &self,
        clause: &str,
        param: &dyn rusqlite::ToSql,
    ) -> Result<Vec<ReadingMeta>> {
        let sql = format!("SELECT {READING_COLUMNS} {READING_JOINS} WHERE {clause}");
        let mut stmt = self.conn.prepare_cached(&sql)?;
        let raws = stmt
            .query_map([param], raw_meta)?
            .collect::<Result<Vec<_>, _>>()?;
        let mut out = Vec::with_capacity(raws.len());
        for raw in raws {
            let id = raw.0.id;
            match finish_meta(raw) {
                Ok(meta) => out.push(meta),
                // One bad stored row is left out and named, never the end of every command.
                Err(e) => self.skip_row(format!("reading {id} left out: {e}")),
            }
        }
        Ok(out)
    }

    /// Route days with their reading counts, newest first.
    pub fn route_days(&self) -> Result<Vec<RouteDay>> {
        let mut stmt = self.conn.prepare(
            "SELECT route_day, count(*) FROM reading GROUP BY route_day ORDER BY route_day DESC",
        )?;
        let rows = stmt.query_map([], |r| {
            Ok(RouteDay {
                day: r.get(0)?,
                readings: usize::try_from(r.get::<_, i64>(1)?).unwrap_or(0),
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Lives of a bearing position (oldest first), each with its readings.
    pub fn lives_with_readings(&self, position_id: i64) -> Result<Vec<LifeReadings>> {
        let lives = self.lives(position_id)?;
        let readings = self.readings_of_position(position_id)?;
        let mut out: Vec<LifeReadings> = lives
            .into_iter()
            .map(|life| LifeReadings {
                life,
                readings: Vec::new(),
            })
            .collect();
        for r in readings {
            if let Some(slot) = out.iter_mut().find(|l| Some(l.life.id) == r.life_id) {
                slot.readings.push(r);
            }
        }
        Ok(out)
    }

    /// Lives of a bearing position, oldest first.
    pub fn lives(&self, position_id: i64) -> Result<Vec<LifeInfo>> {
        let mut stmt = self.conn.prepare_cached(
            "SELECT id, position_id, installed, removed, found_condition FROM bearing_life
             WHERE position_id = ?1 ORDER BY installed",
        )?;
        let rows = stmt.query_map([position_id], life_from_row)?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// The stored analysis (document and scalars) of a reading, if it has been analysed.
    pub fn analysis(&self, reading_id: i64) -> Result<Option<AnalysisRecord>> {
        let row: Option<(String, String, Option<String>)> = self
            .conn
            .prepare_cached(
                "SELECT version, document, diagnosis FROM analysis WHERE reading_id = ?1",
            )?
            .query_row([reading_id], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
            .optional()?;
        let Some((version, doc, diagnosis)) = row else {
            return Ok(None);
        };
        let mut scalars = BTreeMap::new();
        let mut stmt = self
            .conn
            .prepare_cached("SELECT name, value FROM reading_scalar WHERE reading_id = ?1")?;
        let mut rows = stmt.query([reading_id])?;
        while let Some(r) = rows.next()? {
            scalars.insert(r.get(0)?, r.get(1)?);
        }
        Ok(Some(AnalysisRecord {
            reading_id,
            version,
            document: serde_json::from_str(&doc)?,
            diagnosis,
            scalars,
        }))
    }

    /// Rejected files of past imports, newest run first (at most `limit`).
    pub fn rejected_files(&self, limit: usize) -> Result<Vec<ImportLogEntry>> {
        let mut stmt = self.conn.prepare(
            "SELECT l.run_id, r.folder, r.started_at, l.file, l.point, l.outcome, l.reason
             FROM import_log l JOIN import_run r ON r.id = l.run_id
             WHERE l.outcome = 'rejected' ORDER BY l.run_id DESC, l.id LIMIT ?1",
        )?;
        let rows = stmt.query_map([i64::try_from(limit).unwrap_or(i64::MAX)], |r| {
            Ok(ImportLogEntry {
                run_id: r.get(0)?,
                folder: r.get(1)?,
                started_at: r.get(2)?,
                file: r.get(3)?,
                point: r.get(4)?,
                outcome: r.get(5)?,
                reason: r.get(6)?,
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Readings that have no analysis row (0 in a sound database: a reading and its results are written
    /// in one transaction).
    pub fn readings_without_results(&self) -> Result<usize> {
        let n: i64 = self.conn.query_row(
            "SELECT count(*) FROM reading r WHERE NOT EXISTS (SELECT 1 FROM analysis a WHERE a.reading_id = r.id)",
            [],
            |r| r.get(0),
        )?;
        Ok(usize::try_from(n).unwrap_or(0))
    }

    /// Number of readings in the database.
    pub fn reading_count(&self) -> Result<usize> {
        let n: i64 = self
            .conn
            .query_row("SELECT count(*) FROM reading", [], |r| r.get(0))?;
        Ok(usize::try_from(n).unwrap_or(0))
    }
}

/// Reads the factors at columns `at..at+4` (ftf, bsf, bpfo, bpfi) or, when absent, the geometry at
/// `at+4..at+8` (n, d, D, φ).
pub(crate) fn factors_from_row(r: &Row<'_>, at: usize) -> rusqlite::Result<Option<FaultFactors>> {
    if let (Some(ftf), Some(bsf), Some(bpfo), Some(bpfi)) =
        (r.get(at)?, r.get(at + 1)?, r.get(at + 2)?, r.get(at + 3)?)
    {
        return Ok(Some(FaultFactors {
            ftf,
            bsf,
            bpfo,
            bpfi,
        }));
    }
    let n: Option<u32> = r.get(at + 4)?;
    let d: Option<f64> = r.get(at + 5)?;
    let pd: Option<f64> = r.get(at + 6)?;
    let angle: Option<f64> = r.get(at + 7)?;
    Ok(match (n, d, pd) {
        (Some(n), Some(d), Some(pd)) => FaultFactors::from_geometry(n, d, pd, angle.unwrap_or(0.0)),
        _ => None,
    })
}

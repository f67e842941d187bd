//! Applying a plant file to the database, and exporting it back.

use std::collections::BTreeMap;

use chrono::NaiveDate;
use rusqlite::{OptionalExtension, Transaction, params};

use crate::Store;
use crate::error::{Result, StoreError};
use crate::plant::{
    AreaDef, BearingDef, BearingTypeDef, Direction, IsoSupport, Lubrication, MachineDef,
    MachineKind, OutageDef, PastLifeDef, PlantFile, PointDef, SiteDef,
};

/// What applying a plant file changed (rows inserted or updated; 0 everywhere for a file already applied).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
pub struct ApplySummary {
    /// Rows inserted.
    pub inserted: usize,
    /// Rows whose values changed.
    pub updated: usize,
}

impl ApplySummary {
    fn add(&mut self, change: Change) {
        match change {
            Change::Inserted => self.inserted += 1,
            Change::Updated => self.updated += 1,
            Change::Same => {}
        }
    }
    /// True when nothing changed.
    pub fn is_unchanged(&self) -> bool {
        self.inserted == 0 && self.updated == 0
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Change {
    Inserted,
    Updated,
    Same,
}

/// Upserts a row keyed by `key_sql` (a `SELECT id FROM ... WHERE ...` taking `key`), comparing the
/// stored values with `same_sql` (a `SELECT EXISTS(... WHERE id = ?1 AND col IS ?2 ...)`) to count changes.
fn changed(
    tx: &Transaction<'_>,
    update_sql: &str,
    params: &[&dyn rusqlite::ToSql],
) -> Result<bool> {
    // `UPDATE ... WHERE id = ?1 AND NOT (a IS ?2 AND b IS ?3 ...)`: changes only differing rows.
    Ok(tx.execute(update_sql, params)? > 0)
}

impl Store {
    /// Creates or updates the hierarchy, bearing types and outages from a plant file, in one
    /// transaction. Idempotent: applying the same file twice changes nothing. Items absent from the file
    /// are kept (readings refer to them); a changed current `installed` date of a bearing position starts a
    /// new life and closes the previous open one on that date.
    pub fn apply_plant(&mut self, plant: &PlantFile) -> Result<ApplySummary> {
        self.apply_plant_unnamed(plant).map_err(|e| self.named(e))
    }

    fn apply_plant_unnamed(&mut self, plant: &PlantFile) -> Result<ApplySummary> {
        plant.check().map_err(StoreError::Plant)?;
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let mut sum = ApplySummary::default();
        sum.add(apply_site(&tx, &plant.site)?);
        let mut type_ids = BTreeMap::new();
        for t in &plant.bearing_types {
            let (id, c) = apply_bearing_type(&tx, t)?;
            sum.add(c);
            type_ids.insert(t.designation.clone(), id);
        }
        for (ai, area) in plant.areas.iter().enumerate() {
            let (area_id, c) = upsert(
                &tx,
                "SELECT id FROM area WHERE name = ?1",
                &[&area.name],
                "INSERT INTO area (name, sort_order) VALUES (?1, ?2)",
                "UPDATE area SET sort_order = ?2 WHERE name = ?1 AND sort_order IS NOT ?2",
                &[&area.name, &(ai as i64)],
            )?;
            sum.add(c);
            for (mi, m) in area.machines.iter().enumerate() {
                apply_machine(&tx, area_id, mi, m, &type_ids, &mut sum)?;
            }
        }
        for o in &plant.outages {
            apply_outage(&tx, o, &mut sum)?;
        }
        tx.commit()?;
        Ok(sum)
    }

    /// Reads the plant file at `path` and applies it.
    pub fn apply_plant_file(&mut self, path: &std::path::Path) -> Result<ApplySummary> {
        let plant = PlantFile::read(path)?;
        self.apply_plant(&plant)
    }

    /// Writes the database's plant back in the plant-file format (areas, machines, positions and
    /// points in their stored order; bearing types and outages by name).
    pub fn export_plant(&self) -> Result<PlantFile> {
        let c = &self.conn;
        let site = c
            .query_row(
                "SELECT name, timezone_offset FROM site WHERE id = 1",
                [],
                |r| {
                    Ok(SiteDef {
                        name: r.get(0)?,
                        timezone_offset: r.get(1)?,
                    })
                },
            )
            .optional()?
            .unwrap_or(SiteDef {
                name: String::new(),
                timezone_offset: "+00:00".to_owned(),
            });
        let mut stmt = c.prepare(
            "SELECT designation, kind, rolling_elements, element_diameter_mm, pitch_diameter_mm, contact_angle_deg,
                    ftf, bsf, bpfo, bpfi FROM bearing_type ORDER BY designation",
        )?;
        let bearing_types = stmt
            .query_map([], |r| {
                let factors = match (r.get(6)?, r.get(7)?, r.get(8)?, r.get(9)?) {
                    (Some(ftf), Some(bsf), Some(bpfo), Some(bpfi)) => Some(crate::FaultFactors {
                        ftf,
                        bsf,
                        bpfo,
                        bpfi,
                    }),
                    _ => None,
                };
                Ok(BearingTypeDef {
                    designation: r.get(0)?,
                    kind: r.get(1)?,
                    rolling_elements: r.get(2)?,
                    element_diameter_mm: r.get(3)?,
                    pitch_diameter_mm: r.get(4)?,
                    contact_angle_deg: r.get(5)?,
                    factors,
                })
            })?
            .collect::<Result<Vec<_>, _>>()?;
        let mut areas = Vec::new();
        let mut stmt = c.prepare("SELECT id, name FROM area ORDER BY sort_order, id")?;
        let area_rows =
            stmt.query_map([], |r| Ok((r.get::<_, i64>(0)?, r.get::<_, String>(1)?)))?;
        for row in area_rows {
            let (area_id, name) = row?;
            areas.push(AreaDef {
                name,
                machines: export_machines(c, area_id)?,
            });
        }
        let mut outages = Vec::new();
        let mut stmt = c.prepare(
            "SELECT id, name, start_date, end_date FROM outage ORDER BY start_date, name",
        )?;
        let rows = stmt.query_map([], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, String>(1)?,
                r.get::<_, NaiveDate>(2)?,
                r.get::<_, NaiveDate>(3)?,
            ))
        })?;
        for row in rows {
            let (id, name, start, end) = row?;
            let areas = strings(
                c,
                "SELECT a.name FROM outage_area oa JOIN area a ON a.id = oa.area_id WHERE oa.outage_id = ?1 ORDER BY a.sort_order, a.id",
                id,
            )?;
            let machines = strings(
                c,
                "SELECT m.tag FROM outage_machine om JOIN machine m ON m.id = om.machine_id WHERE om.outage_id = ?1 ORDER BY m.tag",
                id,
            )?;
            outages.push(OutageDef {
                name,
                start,
                end,
                areas,
                machines,
            });
        }
        Ok(PlantFile {
            site,
            bearing_types,
            areas,
            outages,
        })
    }
}

fn strings(c: &rusqlite::Connection, sql: &str, id: i64) -> Result<Vec<String>> {
    let mut stmt = c.prepare_cached(sql)?;
    let rows = stmt.query_map([id], |r| r.get(0))?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

fn export_machines(c: &rusqlite::Connection, area_id: i64) -> Result<Vec<MachineDef>> {
    let mut stmt = c.prepare(
        "SELECT id, tag, name, kind, nominal_rpm, iso_group, iso_support FROM machine
         WHERE area_id = ?1 ORDER BY sort_order, id",
    )?;
    let rows = stmt.query_map([area_id], |r| {
        Ok((
            r.get::<_, i64>(0)?,
            r.get::<_, String>(1)?,
            r.get::<_, String>(2)?,
            r.get::<_, String>(3)?,
            r.get::<_, f64>(4)?,
            r.get::<_, u8>(5)?,
            r.get::<_, String>(6)?,
        ))
    })?;
    let mut out = Vec::new();
    for row in rows {
        let (id, tag, name, kind, nominal_rpm, iso_group, iso_support) = row?;
        let mut bearings = Vec::new();
        let mut stmt = c.prepare_cached(
            "SELECT bp.id, bp.position, bp.description, bt.designation, bp.lubrication, bp.nominal_rpm
             FROM bearing_position bp JOIN bearing_type bt ON bt.id = bp.bearing_type_id
             WHERE bp.machine_id = ?1 ORDER BY bp.sort_order, bp.id",
        )?;
        let positions = stmt
            .query_map([id], |r| {
                Ok((
                    r.get::<_, i64>(0)?,
                    r.get::<_, String>(1)?,
                    r.get::<_, String>(2)?,
                    r.get::<_, String>(3)?,
                    r.get::<_, String>(4)?,
                    r.get::<_, Option<f64>>(5)?,
                ))
            })?
            .collect::<Result<Vec<_>, _>>()?;
        for (pid, position, description, bearing_type, lubrication, bp_rpm) in positions {
            let mut lives = c
                .prepare_cached(
                    "SELECT installed, removed, found_condition FROM bearing_life WHERE position_id = ?1 ORDER BY installed",
                )?
                .query_map([pid], |r| {
                    Ok((r.get::<_, NaiveDate>(0)?, r.get::<_, Option<NaiveDate>>(1)?, r.get::<_, Option<String>>(2)?))
                })?
                .collect::<Result<Vec<_>, _>>()?;
            // The last life is the current one; a closed last life (no successor yet) is exported as the
            // current life too, since the file format has no place for a vacant position.
            let installed = lives.pop().map_or(NaiveDate::MIN, |l| l.0);
            let history = lives
                .into_iter()
                .map(|(installed, removed, found)| PastLifeDef {
                    installed,
                    removed: removed.unwrap_or(installed),
                    found: found.unwrap_or_default(),
                })
                .collect();
            bearings.push(BearingDef {
                position,
                description,
                bearing_type,
                lubrication: Lubrication::parse(&lubrication).unwrap_or(Lubrication::Grease),
                nominal_rpm: bp_rpm,
                installed,
                history,
            });
        }
        let points = c
            .prepare_cached(
                "SELECT pt.tag, bp.position, pt.direction, pt.sensor, pt.sensitivity_mv_per_g
                 FROM point pt JOIN bearing_position bp ON bp.id = pt.position_id
                 WHERE bp.machine_id = ?1 ORDER BY pt.sort_order, pt.id",
            )?
            .query_map([id], |r| {
                Ok(PointDef {
                    id: r.get(0)?,
                    bearing: r.get(1)?,
                    direction: Direction::parse(&r.get::<_, String>(2)?).unwrap_or(Direction::H),
                    sensor: r.get(3)?,
                    sensitivity_mv_per_g: r.get(4)?,
                })
            })?
            .collect::<Result<Vec<_>, _>>()?;
        out.push(MachineDef {
            id: tag,
            name,
            kind: MachineKind::parse(&kind).unwrap_or(MachineKind::Other),
            nominal_rpm,
            iso_group,
            iso_support: IsoSupport::parse(&iso_support).unwrap_or(IsoSupport::Rigid),
            bearings,
            points,
        });
    }
    Ok(out)
}

/// Finds the row by key; inserts it when missing, else runs the conditional update.
fn upsert(
    tx: &Transaction<'_>,
    find_sql: &str,
    key: &[&dyn rusqlite::ToSql],
    insert_sql: &str,
    update_sql: &str,
    values: &[&dyn rusqlite::ToSql],
) -> Result<(i64, Change)> {
    let found: Option<i64> = tx
        .prepare_cached(find_sql)?
        .query_row(key, |r| r.get(0))
        .optional()?;
    match found {
        None => {
            tx.prepare_cached(insert_sql)?.execute(values)?;
            Ok((tx.last_insert_rowid(), Change::Inserted))
        }
        Some(id) => {
            let c = if changed(tx, update_sql, values)? {
                Change::Updated
            } else {
                Change::Same
            };
            Ok((id, c))
        }
    }
}

fn apply_site(tx: &Transaction<'_>, site: &SiteDef) -> Result<Change> {
    let (_, c) = upsert(
        tx,
        "SELECT id FROM site WHERE id = 1",
        &[],
        "INSERT INTO site (id, name, timezone_offset) VALUES (1, ?1, ?2)",
        "UPDATE site SET name = ?1, timezone_offset = ?2 WHERE id = 1 AND NOT (name IS ?1 AND timezone_offset IS ?2)",
        &[&site.name, &site.timezone_offset],
    )?;
    Ok(c)
}

fn apply_bearing_type(tx: &Transaction<'_>, t: &BearingTypeDef) -> Result<(i64, Change)> {
    let f = t.factors;
    upsert(
        tx,
        "SELECT id FROM bearing_type WHERE designation = ?1",
        &[&t.designation],
        "INSERT INTO bearing_type (designation, kind, rolling_elements, element_diameter_mm, pitch_diameter_mm,
            contact_angle_deg, ftf, bsf, bpfo, bpfi) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)",
        "UPDATE bearing_type SET kind = ?2, rolling_elements = ?3, element_diameter_mm = ?4, pitch_diameter_mm = ?5,
            contact_angle_deg = ?6, ftf = ?7, bsf = ?8, bpfo = ?9, bpfi = ?10
         WHERE designation = ?1 AND NOT (kind IS ?2 AND rolling_elements IS ?3 AND element_diameter_mm IS ?4
            AND pitch_diameter_mm IS ?5 AND contact_angle_deg IS ?6 AND ftf IS ?7 AND bsf IS ?8 AND bpfo IS ?9
            AND bpfi IS ?10)",
        &[
            &t.designation,
            &t.kind,
            &t.rolling_elements,
            &t.element_diameter_mm,
            &t.pitch_diameter_mm,
            &t.contact_angle_deg,
            &f.map(|f| f.ftf),
            &f.map(|f| f.bsf),
            &f.map(|f| f.bpfo),
            &f.map(|f| f.bpfi),
        ],
    )
}

fn apply_machine(
    tx: &Transaction<'_>,
    area_id: i64,
    order: usize,
    m: &MachineDef,
    type_ids: &BTreeMap<String, i64>,
    sum: &mut ApplySummary,
) -> Result<()> {
    let (machine_id, c) = upsert(
        tx,
        "SELECT id FROM machine WHERE tag = ?1",
        &[&m.id],
        "INSERT INTO machine (tag, area_id, name, kind, nominal_rpm, iso_group, iso_support, sort_order)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
        "UPDATE machine SET area_id = ?2, name = ?3, kind = ?4, nominal_rpm = ?5, iso_group = ?6, iso_support = ?7,
            sort_order = ?8
         WHERE tag = ?1 AND NOT (area_id IS ?2 AND name IS ?3 AND kind IS ?4 AND nominal_rpm IS ?5
            AND iso_group IS ?6 AND iso_support IS ?7 AND sort_order IS ?8)",
        &[&m.id, &area_id, &m.name, &m.kind.as_str(), &m.nominal_rpm, &m.iso_group, &m.iso_support.as_str(), &(order as i64)],
    )?;
    sum.add(c);
    let mut position_ids = BTreeMap::new();
    for (bi, b) in m.bearings.iter().enumerate() {
        let type_id = type_ids.get(&b.bearing_type).copied().ok_or_else(|| {
            StoreError::Plant(format!("unknown bearing type {:?}", b.bearing_type))
        })?;
        let (pid, c) = upsert(
            tx,
            "SELECT id FROM bearing_position WHERE machine_id = ?1 AND position = ?2",
            &[&machine_id, &b.position],
            "INSERT INTO bearing_position (machine_id, position, description, bearing_type_id, lubrication, nominal_rpm,
                sort_order) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)",
            "UPDATE bearing_position SET description = ?3, bearing_type_id = ?4, lubrication = ?5, nominal_rpm = ?6,
                sort_order = ?7
             WHERE machine_id = ?1 AND position = ?2 AND NOT (description IS ?3 AND bearing_type_id IS ?4
                AND lubrication IS ?5 AND nominal_rpm IS ?6 AND sort_order IS ?7)",
            &[&machine_id, &b.position, &b.description, &type_id, &b.lubrication.as_str(), &b.nominal_rpm, &(bi as i64)],
        )?;
        sum.add(c);
        apply_lives(tx, pid, b, sum)?;
        position_ids.insert(b.position.clone(), pid);
    }
    for (pi, p) in m.points.iter().enumerate() {
        let pid = position_ids.get(&p.bearing).copied().ok_or_else(|| {
            StoreError::Plant(format!(
                "point {:?}: unknown bearing position {:?}",
                p.id, p.bearing
            ))
        })?;
        let (point_id, c) = upsert(
            tx,
            "SELECT id FROM point WHERE tag = ?1",
            &[&p.id],
            "INSERT INTO point (tag, position_id, direction, sensor, sensitivity_mv_per_g, sort_order)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            "UPDATE point SET position_id = ?2, direction = ?3, sensor = ?4, sensitivity_mv_per_g = ?5, sort_order = ?6
             WHERE tag = ?1 AND NOT (position_id IS ?2 AND direction IS ?3 AND sensor IS ?4
                AND sensitivity_mv_per_g IS ?5 AND sort_order IS ?6)",
            &[&p.id, &pid, &p.direction.as_str(), &p.sensor, &p.sensitivity_mv_per_g, &(pi as i64)],
        )?;
        if c == Change::Updated {
            // A point moved to another position: its readings follow it.
            tx.execute(
                "UPDATE reading SET position_id = ?2 WHERE point_id = ?1 AND position_id IS NOT ?2",
                params![point_id, pid],
            )?;
            relink_readings(tx, pid)?;
        }
        sum.add(c);
    }
    Ok(())
}

fn apply_lives(
    tx: &Transaction<'_>,
    position_id: i64,
    b: &BearingDef,
    sum: &mut ApplySummary,
) -> Result<()> {
    let mut any = false;
    let lives = b
        .history
        .iter()
        .map(|l| (l.installed, Some(l.removed), Some(l.found.as_str())))
        .chain(std::iter::once((b.installed, None, None)));
    for (installed, removed, found) in lives {
        let (_, c) = upsert(
            tx,
            "SELECT id FROM bearing_life WHERE position_id = ?1 AND installed = ?2",
            &[&position_id, &installed],
            "INSERT INTO bearing_life (position_id, installed, removed, found_condition) VALUES (?1, ?2, ?3, ?4)",
            "UPDATE bearing_life SET removed = ?3, found_condition = ?4
             WHERE position_id = ?1 AND installed = ?2 AND NOT (removed IS ?3 AND found_condition IS ?4)",
            &[&position_id, &installed, &removed, &found],
        )?;
        any |= c != Change::Same;
        sum.add(c);
    }
    // Close open lives that an even later one follows (the file moved `installed` forward).
    let closed = tx.execute(
        "UPDATE bearing_life SET removed = (SELECT min(n.installed) FROM bearing_life n
                WHERE n.position_id = bearing_life.position_id AND n.installed > bearing_life.installed)
         WHERE position_id = ?1 AND removed IS NULL
           AND EXISTS (SELECT 1 FROM bearing_life n WHERE n.position_id = ?1 AND n.installed > bearing_life.installed)",
        [position_id],
    )?;
    sum.updated += closed;
    if any || closed > 0 {
        relink_readings(tx, position_id)?;
    }
    Ok(())
}

/// Sets `reading.life_id` for every reading of a position from the lives' date ranges (a reading
/// belongs to the life installed on or before its route day and not removed by then).
pub(crate) fn relink_readings(tx: &rusqlite::Connection, position_id: i64) -> Result<()> {
    tx.execute(
        "UPDATE reading SET life_id = (SELECT l.id FROM bearing_life l
            WHERE l.position_id = reading.position_id AND l.installed <= reading.route_day
              AND (l.removed IS NULL OR reading.route_day < l.removed)
            ORDER BY l.installed DESC LIMIT 1)
         WHERE position_id = ?1",
        [position_id],
    )?;
    Ok(())
}

fn apply_outage(tx: &Transaction<'_>, o: &OutageDef, sum: &mut ApplySummary) -> Result<()> {
    let (oid, c) = upsert(
        tx,
        "SELECT id FROM outage WHERE name = ?1",
        &[&o.name],
        "INSERT INTO outage (name, start_date, end_date) VALUES (?1, ?2, ?3)",
        "UPDATE outage SET start_date = ?2, end_date = ?3 WHERE name = ?1 AND NOT (start_date IS ?2 AND end_date IS ?3)",
        &[&o.name, &o.start, &o.end],
    )?;
    let scope_changed = crate::planning::set_outage_scope(tx, oid, &o.areas, &o.machines)?;
    sum.add(if c == Change::Same && scope_changed {
        Change::Updated
    } else {
        c
    });
    Ok(())
}

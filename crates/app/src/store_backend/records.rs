//! The typed stage record of a stored call, and the window's view of its forecast.

use spallcast_analysis::record::StageRecord;
use spallcast_model::units::date_of_unix_s;

use crate::model::ForecastView;

/// The typed stage record of a stored call; `None` when the call holds no record of the current
/// schema (written by another program or an older build: only its stage number is shown).
pub fn record_of(call: &spallcast_store::StageCall) -> Option<StageRecord> {
    serde_json::from_value::<StageRecord>(call.evidence.clone())
        .ok()
        .filter(StageRecord::is_current)
}

/// The window's view of a record's forecast: the `replace_by` projection as dates (the interval's
/// ends fall back to the central date when open). `None` without a `replace_by`.
pub fn forecast_from(record: &StageRecord) -> Option<ForecastView> {
    let forecast = record.forecast.as_ref()?;
    let p = forecast.replace_by?;
    let central = date_of_unix_s(p.t_s)?;
    Some(ForecastView {
        replace_by: central,
        earliest: date_of_unix_s(p.lo_s).unwrap_or(central),
        latest: p.hi_s.and_then(date_of_unix_s).unwrap_or(central),
        risk_from: forecast.risk_from.and_then(|r| date_of_unix_s(r.t_s)),
    })
}

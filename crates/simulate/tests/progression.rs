//! Fault-progression model checks.
#![allow(clippy::unwrap_used)]

use spallcast_simulate::{
    GREASE_STAGE_DAYS, Lubrication, OIL_LIFE_FACTOR, Progression, REFERENCE_RPM, Stage,
};

/// Oil-fed bearings progress slower than grease-fed ones once damaged (reference sheet §9,
/// common practice, no source): at every seed the oil bearing reaches each stage later, and the
/// mean ratio lies inside the documented factor range.
#[test]
fn oil_progresses_slower_than_grease() {
    let mut ratios = Vec::new();
    for seed in 0..200 {
        let g = Progression::draw(Lubrication::Grease, seed);
        let o = Progression::draw(Lubrication::Oil, seed);
        for s in 2..=4 {
            let stage = Stage::new(s).unwrap();
            assert!(
                o.days_to_stage(stage) > g.days_to_stage(stage),
                "seed {seed} stage {s}"
            );
        }
        ratios.push(o.days_to_stage(Stage::MAX) / g.days_to_stage(Stage::MAX));
        // Same calendar time: the oil bearing is never further along.
        for day in [30.0, 120.0, 300.0, 500.0] {
            assert!(o.at(day, REFERENCE_RPM).0 <= g.at(day, REFERENCE_RPM).0);
        }
    }
    let mean = ratios.iter().sum::<f64>() / ratios.len() as f64;
    assert!(
        mean > OIL_LIFE_FACTOR.0 && mean < OIL_LIFE_FACTOR.1,
        "mean oil/grease ratio {mean}"
    );
}

/// Drawn grease durations stay inside the documented ranges (common practice, no source).
#[test]
fn grease_durations_inside_documented_ranges() {
    for seed in 0..100 {
        let p = Progression::draw(Lubrication::Grease, seed);
        for (d, (lo, hi)) in p.stage_days.iter().zip(GREASE_STAGE_DAYS) {
            assert!(*d >= lo && *d < hi, "seed {seed}: {d} outside {lo}..{hi}");
        }
    }
    assert_ne!(
        Progression::draw(Lubrication::Grease, 1),
        Progression::draw(Lubrication::Grease, 2)
    );
    assert_eq!(
        Progression::draw(Lubrication::Oil, 9),
        Progression::draw(Lubrication::Oil, 9)
    );
}

#[test]
fn stages_advance_in_order_and_saturate() {
    let p = Progression::from_stage_days([10.0, 20.0, 5.0, 2.0]);
    assert_eq!(p.at_equivalent_days(-1.0), (Stage::HEALTHY, 0.0));
    assert_eq!(p.at_equivalent_days(0.0).0, Stage::HEALTHY);
    let (s, sev) = p.at_equivalent_days(5.0);
    assert_eq!((s.get(), sev), (1, 0.5));
    let (s, sev) = p.at_equivalent_days(20.0);
    assert_eq!(s.get(), 2);
    assert!((sev - 0.5).abs() < 1e-12);
    assert_eq!(p.at_equivalent_days(33.0).0.get(), 3);
    assert_eq!(p.at_equivalent_days(36.0).0.get(), 4);
    assert_eq!(p.at_equivalent_days(1e6), (Stage::MAX, 1.0));
    assert!((p.days_to_stage(Stage::new(3).unwrap()) - 30.0).abs() < 1e-12);
    let mut last = Stage::HEALTHY;
    for d in 0..400 {
        let (s, sev) = p.at_equivalent_days(f64::from(d) * 0.1);
        assert!(s >= last && (0.0..=1.0).contains(&sev));
        last = s;
    }
}

/// Damage accumulates per revolution (from memory): twice the speed reaches a stage in half the
/// calendar time.
#[test]
fn faster_shaft_progresses_faster() {
    let p = Progression::draw(Lubrication::Grease, 3);
    let d3 = p.days_to_stage(Stage::new(3).unwrap());
    assert_eq!(p.at(d3 * 0.99, REFERENCE_RPM).0.get(), 2);
    assert_eq!(p.at(d3 * 0.51, 2.0 * REFERENCE_RPM).0.get(), 3);
    assert_eq!(p.at(d3 * 1.01, 0.5 * REFERENCE_RPM).0.get(), 2);
}

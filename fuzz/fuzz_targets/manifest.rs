//! Route manifest reader. Beyond "no panic": every error names the manifest, and every accepted row
//! is a path that stays inside the route folder, with a usable speed, channel and rate.
#![no_main]

use std::path::{Component, Path};

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::{assert_names_file, write_input};

fuzz_target!(|data: &[u8]| {
    let path = write_input("route.csv", data);
    match spallcast_formats::read_manifest(&path) {
        Err(e) => assert_names_file(&e, &path),
        Ok(rows) => {
            for row in rows {
                match row {
                    Err(e) => assert_names_file(&e, &path),
                    Ok(row) => {
                        let inside = Path::new(&row.file)
                            .components()
                            .all(|c| matches!(c, Component::Normal(_) | Component::CurDir));
                        assert!(inside, "accepted a path leaving the folder: {:?}", row.file);
                        assert!(!row.point.is_empty(), "accepted an empty point id");
                        assert!(
                            row.rpm > 0.0 && row.rpm <= spallcast_formats::MAX_RPM,
                            "accepted rpm {}",
                            row.rpm
                        );
                        assert!(row.channel >= 1, "accepted channel 0");
                        if let Some(rate) = row.sample_rate_hz {
                            assert!(rate.is_finite() && rate > 0.0, "accepted rate {rate}");
                        }
                    }
                }
            }
        }
    }
});

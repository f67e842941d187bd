//! Plant file parser (`PlantFile::parse`). An error names the file; an accepted plant file writes
//! back to TOML that parses again and writes identically (what the store exports, it can re-read).
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::assert_names_file;
use spallcast_store::PlantFile;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let path = Path::new("/fuzz/plant.toml");
    match PlantFile::parse(text, path) {
        Err(e) => assert_names_file(&e, path),
        Ok(plant) => {
            let first = plant
                .to_toml()
                .expect("an accepted plant file must write back");
            let again = PlantFile::parse(&first, path)
                .unwrap_or_else(|e| panic!("exported plant file does not parse: {e}\n{first}"));
            let second = again.to_toml().expect("second write");
            assert_eq!(first, second, "export is not stable");
        }
    }
});

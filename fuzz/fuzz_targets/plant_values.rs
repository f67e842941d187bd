//! Plant file values (`PlantFile::parse`): a valid plant file whose numbers and ids come from the
//! fuzzer (any `f64` bit pattern, including NaN, infinities and negatives; ids with control
//! characters, empty ids, duplicate outage names). Whatever is accepted must be usable: speeds finite
//! and positive, ids non-empty without control characters, geometry physically possible, outage names
//! unique; whatever is refused must name the file.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    spallcast_fuzz::plant_values::check(data);
});

//! UFF 58 reader through the `.uff` extension; seeded with ASCII dataset-58 files.
#![no_main]

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::{check_recording, write_input};

fuzz_target!(|data: &[u8]| {
    let path = write_input("input.uff", data);
    check_recording(&spallcast_formats::read_uff58(&path), &path);
});

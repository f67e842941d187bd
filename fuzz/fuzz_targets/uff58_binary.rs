//! UFF 58 reader; seeded with binary (`58b`) files, little and big endian, single and double
//! precision. The file has no extension, so `read_recording` must recognise it by content first.
#![no_main]

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::{check_recording, write_input};

fuzz_target!(|data: &[u8]| {
    let path = write_input("input", data);
    check_recording(&spallcast_formats::read_uff58(&path), &path);
    check_recording(&spallcast_formats::read_recording(&path, None), &path);
});

//! WAV reader: `read_wav`, and `read_recording` recognising RIFF by content (no extension).
#![no_main]

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::{check_recording, write_input};

fuzz_target!(|data: &[u8]| {
    let path = write_input("input", data);
    check_recording(&spallcast_formats::read_wav(&path), &path);
    check_recording(&spallcast_formats::read_recording(&path, None), &path);
});

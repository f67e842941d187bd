//! CSV waveform reader, without a rate hint and with the manifest's hint.
#![no_main]

use libfuzzer_sys::fuzz_target;
use spallcast_fuzz::{check_recording, write_input};

fuzz_target!(|data: &[u8]| {
    let path = write_input("input.csv", data);
    check_recording(&spallcast_formats::read_csv_waveform(&path, None), &path);
    check_recording(
        &spallcast_formats::read_csv_waveform(&path, Some(25_600.0)),
        &path,
    );
});

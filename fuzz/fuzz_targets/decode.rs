//! The decoder on any bytes: it must return, never panic, and stay within
//! the verifier's limits (libFuzzer's -rss_limit_mb and -timeout catch the
//! rest).
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = classcert_format::decode_document_with(data, &classcert_verifier::limits::DECODE);
});

//! The whole verifier on any bytes (signed or not): a verdict, never a
//! panic. A verified verdict on a mutated input is not a failure by itself
//! (a mutation can leave the mathematics true); the corpus test checks
//! reasons.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = classcert_verifier::verify_signed_with(data, &[], &mut |_| {});
});

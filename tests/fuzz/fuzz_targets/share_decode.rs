//! Fuzz target: the share-link decoder, `bandwright::share::decode_share`.
//!
//! For any bytes (read as UTF-8, invalid sequences replaced by U+FFFD):
//! - `decode_share` returns and never panics; an error's message can be written and is not empty.
//! - A design it accepts converts with `to_circuit`, and packing it again with `encode_share` and
//!   decoding that gives an equal design (the module promises an exact round trip).
//!
//! Half of the inputs are also tried behind the `bw1.` prefix, so the fuzzer reaches the base64,
//! DEFLATE and design stages without having to discover the prefix first.
#![no_main]

use bandwright::share::{decode_share, encode_share, PREFIX};
use libfuzzer_sys::fuzz_target;

fn check(text: &str) {
    match decode_share(text) {
        Ok(design) => {
            design.to_circuit().expect("decode_share accepted a design that to_circuit refuses");
            let again = decode_share(&encode_share(&design)).expect("a packed design decodes");
            assert_eq!(design, again, "the design changed on a pack and unpack");
        }
        Err(error) => assert!(!error.to_string().is_empty()),
    }
}

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    check(&text);
    if data.first().is_some_and(|b| b & 1 == 1) {
        check(&format!("{PREFIX}{}", &text));
    }
});

//! Share links: a design packed into text that fits a URL fragment, and read back exactly.
//!
//! Shape: `bw1.` followed by the design file's compact JSON (see [`crate::design`]), compressed
//! with raw DEFLATE (RFC 1951) and written in the URL-safe base64 alphabet without padding
//! (RFC 4648 §5). The prefix names the version of this packing, so a later build can read old
//! links. Numbers are written in SI units with shortest round-trip digits, so decoding a link
//! gives the same design, bit for bit.
//!
//! The decoder is meant for untrusted text (a link pasted from anywhere). It never panics, bounds
//! both the text it accepts and the size it inflates to (a small link cannot expand into a huge
//! allocation), and validates the design as a file would be ([`crate::design::parse_design`]).

use crate::design::{parse_design, Design, DesignError};
use base64::engine::general_purpose::URL_SAFE_NO_PAD;
use base64::Engine as _;
use std::fmt;

/// The prefix of a version-1 share text.
pub const PREFIX: &str = "bw1.";
/// The longest share text accepted, in characters (browsers keep URLs far longer; designs of a
/// few dozen parts pack into well under 2 000).
pub const MAX_SHARE_CHARS: usize = 65_536;
/// The largest design JSON a share text may inflate to, in bytes.
pub const MAX_DESIGN_BYTES: usize = 262_144;
/// DEFLATE level used when packing (miniz's scale 0–10).
const LEVEL: u8 = 9;

/// Why a share text could not be read.
#[derive(Debug, Clone, PartialEq)]
pub enum ShareError {
    /// Nothing was given.
    Empty,
    /// The text is longer than [`MAX_SHARE_CHARS`].
    TooLong {
        /// Its length in characters.
        chars: usize,
    },
    /// The text does not start with a known prefix.
    UnknownPrefix {
        /// The first characters found (at most 12).
        found: String,
    },
    /// A character outside the URL-safe base64 alphabet, or a length no base64 text has.
    BadCharacters {
        /// The first offending character, if one was found.
        character: Option<char>,
        /// Its 0-based position after the prefix.
        position: usize,
    },
    /// The bytes are not a complete DEFLATE stream (the link was cut short or altered).
    Corrupt,
    /// The stream inflates to more than [`MAX_DESIGN_BYTES`].
    TooLarge,
    /// The inflated bytes are not UTF-8 text.
    NotText,
    /// The text inflated, but is not a valid design.
    Design(DesignError),
}

impl fmt::Display for ShareError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Empty => write!(f, "the share link holds no design: copy the whole link, including the part after #"),
            Self::TooLong { chars } => write!(
                f,
                "the share link is {chars} characters long, more than the {MAX_SHARE_CHARS} accepted: \
                 share the design file instead"
            ),
            Self::UnknownPrefix { found } => write!(
                f,
                "the share link starts with {found:?}, not {PREFIX:?}: it was not made by this tool, or was cut \
                 at the front"
            ),
            Self::BadCharacters { character: Some(c), position } => write!(
                f,
                "the share link has {c:?} at position {position}, where only letters, digits, - and _ belong: \
                 it was altered or cut"
            ),
            Self::BadCharacters { character: None, position } => write!(
                f,
                "the share link ends after {position} characters, a length no complete link has: it was cut short"
            ),
            Self::Corrupt => {
                write!(f, "the share link is damaged (the packed design is incomplete): copy the whole link")
            }
            Self::TooLarge => write!(
                f,
                "the share link unpacks to more than {MAX_DESIGN_BYTES} bytes, more than any design needs: \
                 it was not made by this tool"
            ),
            Self::NotText => {
                write!(f, "the share link unpacks to bytes that are not text: it was not made by this tool")
            }
            Self::Design(e) => write!(f, "the share link holds an invalid design: {e}"),
        }
    }
}

impl std::error::Error for ShareError {}

impl From<DesignError> for ShareError {
    fn from(e: DesignError) -> Self {
        Self::Design(e)
    }
}

/// Packs a design into share text (see the module doc for the shape).
pub fn encode_share(design: &Design) -> String {
    let json = serde_json::to_string(design).expect("a design always serializes");
    let packed = miniz_oxide::deflate::compress_to_vec(json.as_bytes(), LEVEL);
    let mut text = String::with_capacity(PREFIX.len() + packed.len() * 4 / 3 + 4);
    text.push_str(PREFIX);
    URL_SAFE_NO_PAD.encode_string(packed, &mut text);
    text
}

/// Reads share text back into a design. Leading `#`, a `d=` key and surrounding white space are
/// accepted, so the whole fragment of a link may be passed.
///
/// # Errors
/// [`ShareError`] naming what is wrong: empty, too long, not ours, altered characters, a cut or
/// damaged stream, an oversized or non-text payload, or an invalid design.
pub fn decode_share(text: &str) -> Result<Design, ShareError> {
    let text = text.trim();
    let text = text.strip_prefix('#').unwrap_or(text);
    let text = text.strip_prefix("d=").unwrap_or(text);
    if text.is_empty() {
        return Err(ShareError::Empty);
    }
    let chars = text.chars().count();
    if chars > MAX_SHARE_CHARS {
        return Err(ShareError::TooLong { chars });
    }
    let Some(body) = text.strip_prefix(PREFIX) else {
        return Err(ShareError::UnknownPrefix { found: text.chars().take(12).collect() });
    };
    if let Some((position, character)) =
        body.chars().enumerate().find(|(_, c)| !(c.is_ascii_alphanumeric() || *c == '-' || *c == '_'))
    {
        return Err(ShareError::BadCharacters { character: Some(character), position });
    }
    if body.len() % 4 == 1 {
        return Err(ShareError::BadCharacters { character: None, position: body.len() });
    }
    let packed = URL_SAFE_NO_PAD
        .decode(body)
        .map_err(|_| ShareError::BadCharacters { character: None, position: body.len() })?;
    let json =
        miniz_oxide::inflate::decompress_to_vec_with_limit(&packed, MAX_DESIGN_BYTES).map_err(|e| match e.status {
            miniz_oxide::inflate::TINFLStatus::HasMoreOutput => ShareError::TooLarge,
            _ => ShareError::Corrupt,
        })?;
    let json = String::from_utf8(json).map_err(|_| ShareError::NotText)?;
    Ok(parse_design(&json)?)
}

#[cfg(test)]
mod tests {
    use super::*;

    const DEMO: &str = r#"{"format": "bandwright-design", "version": 1, "name": "share <b>demo</b>",
        "note": "ünïcode note",
        "source": {"node": "in", "resistance": 600},
        "load": {"node": "out", "resistance": "10k", "capacitance": "47p"},
        "output": "out",
        "elements": [
          {"ref": "R1", "kind": "resistor", "value": 1234.5678901234567, "nodes": ["in", "mid"]},
          {"ref": "L1", "kind": "inductor", "value": "3.3m", "nodes": ["mid", "out"], "series_resistance": 0.15},
          {"ref": "C1", "kind": "capacitor", "value": 1e-7, "nodes": ["out", "0"]}
        ]}"#;

    fn demo() -> Design {
        parse_design(DEMO).unwrap()
    }

    // Source: the module's contract (decode ∘ encode is the identity, bit for bit).
    #[test]
    fn round_trip_is_exact_and_url_safe() {
        let design = demo();
        let text = encode_share(&design);
        assert!(text.starts_with(PREFIX));
        assert!(text[PREFIX.len()..].bytes().all(|b| b.is_ascii_alphanumeric() || b == b'-' || b == b'_'), "{text}");
        assert_eq!(decode_share(&text).unwrap(), design);
        assert_eq!(decode_share(&format!("  #d={text}\n")).unwrap(), design);
        assert_eq!(decode_share(&format!("#{text}")).unwrap(), design);
        // Compression works: the link is shorter than the compact JSON it carries.
        assert!(text.len() < serde_json::to_string(&design).unwrap().len(), "{} chars", text.len());
    }

    #[test]
    fn every_damage_gets_its_own_message() {
        let text = encode_share(&demo());
        assert_eq!(decode_share("   "), Err(ShareError::Empty));
        assert_eq!(decode_share("#d="), Err(ShareError::Empty));
        assert!(matches!(decode_share("xx1.abcd"), Err(ShareError::UnknownPrefix { found }) if found == "xx1.abcd"));
        assert!(matches!(
            decode_share(&format!("{}<{}", &text[..10], &text[10..])),
            Err(ShareError::BadCharacters { character: Some('<'), position: 6 })
        ));
        // Cut short: either a length no base64 has or an incomplete stream.
        for cut in [text.len() - 1, text.len() - 2, text.len() - 3, text.len() / 2, PREFIX.len() + 1] {
            let error = decode_share(&text[..cut]).unwrap_err();
            assert!(
                matches!(error, ShareError::Corrupt | ShareError::BadCharacters { character: None, .. }),
                "cut at {cut}: {error:?}"
            );
        }
        // A flipped character in the middle changes the stream: never the same design silently.
        let mut altered: Vec<char> = text.chars().collect();
        let middle = PREFIX.len() + (altered.len() - PREFIX.len()) / 2;
        altered[middle] = if altered[middle] == 'A' { 'B' } else { 'A' };
        let altered: String = altered.into_iter().collect();
        match decode_share(&altered) {
            Ok(design) => assert_ne!(design, demo()),
            Err(error) => assert!(!error.to_string().is_empty()),
        }
        let long = format!("{PREFIX}{}", "A".repeat(MAX_SHARE_CHARS));
        assert!(matches!(decode_share(&long), Err(ShareError::TooLong { .. })));
    }

    #[test]
    fn oversized_non_text_and_invalid_payloads_are_refused() {
        let pack = |bytes: &[u8]| {
            format!("{PREFIX}{}", URL_SAFE_NO_PAD.encode(miniz_oxide::deflate::compress_to_vec(bytes, 9)))
        };
        // A zip bomb: 1 MB of spaces packs into about a kilobyte.
        let bomb = pack(&vec![b' '; 1 << 20]);
        assert!(bomb.len() < 4096, "{}", bomb.len());
        assert_eq!(decode_share(&bomb), Err(ShareError::TooLarge));
        assert_eq!(decode_share(&pack(&[0xff, 0xfe, 0x00])), Err(ShareError::NotText));
        assert!(matches!(
            decode_share(&pack(b"{\"format\": \"other\"}")),
            Err(ShareError::Design(DesignError::WrongFormat { .. }))
        ));
        let message = decode_share(&pack(b"not json")).unwrap_err().to_string();
        assert!(message.starts_with("the share link holds an invalid design: design file, line 1"), "{message}");
    }
}

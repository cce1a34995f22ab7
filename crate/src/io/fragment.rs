//! Text packed for a URL fragment: raw DEFLATE (RFC 1951) then base64url without padding
//! (RFC 4648, section 5). The page puts an analysis recipe after `#recipe=` in share links
//! this way; a fragment is never sent to a server.

use flate2::read::DeflateDecoder;
use flate2::write::DeflateEncoder;
use flate2::Compression;
use std::io::{Read, Write};
use thiserror::Error;

/// Why a fragment cannot be unpacked.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("share link: {0}")]
pub struct FragmentError(pub String);

/// Unpacked text larger than this is refused (a recipe is a few kilobytes).
pub const MAX_UNPACKED: usize = 1 << 20;

const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_";

/// Base64url without padding.
pub fn base64url_encode(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [chunk[0], *chunk.get(1).unwrap_or(&0), *chunk.get(2).unwrap_or(&0)];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        let chars = chunk.len() + 1;
        for k in 0..chars {
            out.push(ALPHABET[((n >> (18 - 6 * k)) & 63) as usize] as char);
        }
    }
    out
}

/// Base64 in either alphabet (`-_` or `+/`), padding optional, whitespace ignored.
pub fn base64url_decode(text: &str) -> Result<Vec<u8>, FragmentError> {
    let mut out = Vec::with_capacity(text.len() * 3 / 4);
    let mut acc = 0u32;
    let mut bits = 0u32;
    for (i, c) in text.trim_end_matches('=').bytes().enumerate() {
        let v = match c {
            b'A'..=b'Z' => c - b'A',
            b'a'..=b'z' => c - b'a' + 26,
            b'0'..=b'9' => c - b'0' + 52,
            b'-' | b'+' => 62,
            b'_' | b'/' => 63,
            b' ' | b'\n' | b'\r' | b'\t' => continue,
            _ => {
                return Err(FragmentError(format!(
                    "character {} ('{}') is not base64",
                    i + 1,
                    c.escape_ascii()
                )))
            }
        };
        acc = (acc << 6) | u32::from(v);
        bits += 6;
        if bits >= 8 {
            bits -= 8;
            out.push((acc >> bits) as u8);
            acc &= (1 << bits) - 1;
        }
    }
    if bits >= 6 {
        return Err(FragmentError("the text is cut off (one base64 character too many)".into()));
    }
    Ok(out)
}

/// `text` deflated and base64url-encoded.
pub fn pack_text(text: &str) -> String {
    let mut enc = DeflateEncoder::new(Vec::new(), Compression::best());
    enc.write_all(text.as_bytes()).expect("writing to memory cannot fail");
    base64url_encode(&enc.finish().expect("writing to memory cannot fail"))
}

/// The text packed by [`pack_text`].
pub fn unpack_text(packed: &str) -> Result<String, FragmentError> {
    let bytes = base64url_decode(packed)?;
    let mut out = Vec::new();
    DeflateDecoder::new(bytes.as_slice())
        .take(MAX_UNPACKED as u64 + 1)
        .read_to_end(&mut out)
        .map_err(|e| FragmentError(format!("the packed text is damaged ({e})")))?;
    if out.len() > MAX_UNPACKED {
        return Err(FragmentError(format!(
            "the packed text unpacks to more than {MAX_UNPACKED} bytes"
        )));
    }
    String::from_utf8(out).map_err(|_| FragmentError("the packed text is not UTF-8".into()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64url_matches_rfc4648_test_vectors() {
        // RFC 4648, section 10 (padding removed, as base64url without padding).
        for (plain, coded) in [
            ("", ""),
            ("f", "Zg"),
            ("fo", "Zm8"),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg"),
            ("fooba", "Zm9vYmE"),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64url_encode(plain.as_bytes()), coded);
            assert_eq!(base64url_decode(coded).unwrap(), plain.as_bytes());
        }
        assert_eq!(base64url_decode("Zm9vYg==").unwrap(), b"foob");
        assert_eq!(base64url_encode(&[0xfb, 0xff]), "-_8");
        assert_eq!(base64url_decode("+/8").unwrap(), vec![0xfb, 0xff]);
    }

    #[test]
    fn packing_round_trips_and_refuses_damage() {
        let text = "{\"format\":\"sillage-recipe\",\"version\":1,\"view\":{\"quantity\":\"ωz\"}}";
        let packed = pack_text(text);
        assert!(packed.bytes().all(|c| c.is_ascii_alphanumeric() || c == b'-' || c == b'_'));
        assert_eq!(unpack_text(&packed).unwrap(), text);
        assert!(unpack_text("not base64!").is_err());
        assert!(unpack_text("AAAA").is_err() || unpack_text("AAAA").unwrap().is_empty());
        assert!(base64url_decode("Zm9vY").is_err());
    }
}

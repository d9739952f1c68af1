//! The model file: a versioned, checksummed binary container.
//!
//! Layout, all integers little-endian:
//!
//! | bytes | content |
//! |---|---|
//! | 8 | magic `LXCLTAGR` |
//! | 4 | [`FORMAT_VERSION`] |
//! | 8 | payload length |
//! | 4 | CRC-32 of the payload |
//! | … | payload: the model, serialised with postcard (serde) |
//!
//! A file that is shorter than its header says, has another magic, another
//! version or a wrong checksum is refused with an error saying which.
//! Files are written to a temporary file beside the target and renamed,
//! so a failed write leaves any previous model intact.

use std::io::Write;
use std::path::Path;

use serde::{de::DeserializeOwned, Serialize};

use crate::error::{Error, Result};

/// The magic bytes that open every model file.
pub const MAGIC: &[u8; 8] = b"LXCLTAGR";

/// The version of the model format this build writes and reads.
/// Version 2 recorded NFC normalisation of the cluster paths; version 3
/// added the input columns, conjunctions and further cluster sets of the
/// feature config; version 4 writes the feature index and the weights
/// as a few long runs of bytes, which load several times faster. Older
/// files are refused.
pub const FORMAT_VERSION: u32 = 4;

const HEADER: usize = 8 + 4 + 8 + 4;

/// Serialises `model` into the container format.
pub fn encode<T: Serialize>(model: &T) -> Vec<u8> {
    let payload = postcard::to_stdvec(model)
        .expect("in-memory serialisation cannot fail");
    let mut out = Vec::with_capacity(HEADER + payload.len());
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&FORMAT_VERSION.to_le_bytes());
    out.extend_from_slice(&(payload.len() as u64).to_le_bytes());
    out.extend_from_slice(&crc32fast::hash(&payload).to_le_bytes());
    out.extend_from_slice(&payload);
    out
}

/// Parses the container format; `path` names the file in errors.
pub fn decode<T: DeserializeOwned>(bytes: &[u8], path: &Path) -> Result<T> {
    let bad =
        |reason: String| Error::Model { path: path.to_path_buf(), reason };
    if bytes.len() < 8 || &bytes[..8] != MAGIC {
        return Err(bad("not a lexiclade model file".into()));
    }
    if bytes.len() < HEADER {
        return Err(bad("truncated model file (incomplete header)".into()));
    }
    let version =
        u32::from_le_bytes(bytes[8..12].try_into().expect("4 bytes"));
    if version != FORMAT_VERSION {
        return Err(bad(format!(
            "model format version {version} is not supported (this build \
             reads version {FORMAT_VERSION})"
        )));
    }
    let len = u64::from_le_bytes(bytes[12..20].try_into().expect("8 bytes"));
    let crc = u32::from_le_bytes(bytes[20..24].try_into().expect("4 bytes"));
    let payload = &bytes[HEADER..];
    if (payload.len() as u64) < len {
        return Err(bad(format!(
            "truncated model file ({} of {len} payload bytes)",
            payload.len()
        )));
    }
    if payload.len() as u64 > len {
        return Err(bad("trailing bytes after the model".into()));
    }
    if crc32fast::hash(payload) != crc {
        return Err(bad("corrupt model file (checksum mismatch)".into()));
    }
    postcard::from_bytes(payload)
        .map_err(|e| bad(format!("corrupt model file ({e})")))
}

/// Writes `model` to `path` atomically.
pub fn save<T: Serialize>(model: &T, path: &Path) -> Result<()> {
    let io =
        |e: std::io::Error| Error::Io { path: path.to_path_buf(), source: e };
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let mut temp = tempfile::Builder::new()
        .prefix(".model.partial-")
        .tempfile_in(dir)
        .map_err(io)?;
    temp.write_all(&encode(model)).map_err(io)?;
    temp.as_file().sync_all().map_err(io)?;
    temp.persist(path).map_err(|e| io(e.error))?;
    Ok(())
}

/// Reads a model written by [`save`].
pub fn load<T: DeserializeOwned>(path: &Path) -> Result<T> {
    let bytes = std::fs::read(path)
        .map_err(|e| Error::Io { path: path.to_path_buf(), source: e })?;
    decode(&bytes, path)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(serde::Serialize, serde::Deserialize, PartialEq, Debug)]
    struct Toy {
        name: String,
        weights: Vec<f32>,
    }

    fn toy() -> Toy {
        Toy { name: "x".into(), weights: vec![1.5, -2.0, 0.25] }
    }

    #[test]
    fn round_trip() {
        let p = Path::new("m");
        let got: Toy = decode(&encode(&toy()), p).unwrap();
        assert_eq!(got, toy());
    }

    #[test]
    fn truncated_altered_and_foreign_files_are_refused() {
        let p = Path::new("m");
        let bytes = encode(&toy());
        let msg = |b: &[u8]| decode::<Toy>(b, p).unwrap_err().to_string();
        assert!(msg(&bytes[..bytes.len() - 1]).contains("truncated"));
        assert!(msg(&bytes[..10]).contains("truncated"));
        assert!(
            msg(b"hello world, not a model").contains("not a lexiclade model")
        );
        let mut altered = bytes.clone();
        *altered.last_mut().unwrap() ^= 1;
        assert!(msg(&altered).contains("checksum"));
        let mut other = bytes.clone();
        other[8] = 9;
        let m = msg(&other);
        assert!(
            m.contains("version 9")
                && m.contains(&format!("reads version {FORMAT_VERSION}")),
            "{m}"
        );
        let mut longer = bytes;
        longer.push(0);
        assert!(msg(&longer).contains("trailing"));
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    #[derive(serde::Serialize, serde::Deserialize, PartialEq, Debug)]
    struct Toy {
        names: Vec<String>,
        weights: Vec<f32>,
    }

    proptest! {
        /// Any bytes: a clear error naming the file, never a panic (and
        /// never a model: random bytes do not start with the magic).
        #[test]
        fn any_bytes_are_refused_cleanly(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
            let err = decode::<Toy>(&bytes, Path::new("m")).unwrap_err();
            prop_assert!(err.to_string().starts_with("m: "), "{}", err);
        }

        /// A valid file with any one byte changed or cut short is refused.
        #[test]
        fn damaged_files_are_refused(at in 0usize..1000, flip in 1u8..=255, cut in any::<bool>()) {
            let toy = Toy { names: vec!["a".into(), "bc".into()], weights: vec![0.5, -1.0] };
            let mut bytes = encode(&toy);
            let at = at % bytes.len();
            if cut {
                bytes.truncate(at);
            } else {
                bytes[at] ^= flip;
            }
            prop_assert!(decode::<Toy>(&bytes, Path::new("m")).is_err());
        }
    }
}

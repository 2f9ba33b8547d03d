//! The native binary network file (`.gnet`).
//!
//! Layout (all integers little-endian):
//!
//! | bytes            | content                                            |
//! |------------------|----------------------------------------------------|
//! | 0..8             | magic `GANGLNET`                                   |
//! | 8..12            | format version, `u32` (this build writes and reads [`FORMAT_VERSION`]) |
//! | 12..20           | payload length `n`, `u64`                          |
//! | 20..20+n         | payload: one postcard-encoded record (below)       |
//! | 20+n..24+n       | CRC-32 (IEEE) of the payload, `u32`                |
//!
//! The payload of version 1 is, in this order (postcard wire format: strings
//! and byte arrays are a varint length followed by the bytes, `Option` a
//! 0/1 byte, `f64` 8 bytes little-endian, `u8` one byte, `u64` a varint):
//! `name: str`, `description: Option<str>`, `flow_axis: u8` (0 = x, 1 = y,
//! 2 = z), `length_m, area_m2, bulk_volume_m3: f64`,
//! `extent_m: Option<[f64; 3]>`, `n_pores, n_throats: u64`, then one byte
//! array per column: pore `x, y, z, radius, shape_factor, volume,
//! clay_volume` (each `8 n_pores` bytes of little-endian IEEE-754 doubles),
//! pore `boundary` (`n_pores` bytes: 0 interior, 1 inlet, 2 outlet), throat
//! `pores` (`8 n_throats` bytes: `u32` pore a then `u32` pore b), throat
//! `radius, shape_factor, volume, clay_volume, length, conduit_a,
//! conduit_b` (each `8 n_throats` bytes of doubles).
//!
//! Columns are raw byte arrays so that reading is a bounds-checked copy per
//! column and every f64 keeps its exact bits. A reader refuses
//! ([`Rule::BadBinary`]) a file that is truncated, whose checksum does not
//! match (corrupt), that does not start with the magic (foreign) or whose
//! version is newer than [`FORMAT_VERSION`].

use std::io::{self, Write};
use std::path::Path;

use rayon::prelude::*;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

use super::atomic::AtomicFile;
use super::{Loaded, ReadError, WriteError, network_warnings};
use crate::network::validate::{Rule, Target, Violation};
use crate::network::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

/// The first eight bytes of every binary network file.
pub const MAGIC: [u8; 8] = *b"GANGLNET";
/// The newest format version this build reads, and the one it writes.
pub const FORMAT_VERSION: u32 = 1;
/// Conventional file extension of binary network files.
pub const EXTENSION: &str = "gnet";

const HEADER_LEN: usize = 20;
const TRAILER_LEN: usize = 4;

/// A byte array borrowed from the payload.
#[derive(Clone, Copy)]
struct Raw<'a>(&'a [u8]);

impl Serialize for Raw<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_bytes(self.0)
    }
}

impl<'de: 'a, 'a> Deserialize<'de> for Raw<'a> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> serde::de::Visitor<'de> for V {
            type Value = Raw<'de>;
            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("a byte array")
            }
            fn visit_borrowed_bytes<E>(self, v: &'de [u8]) -> Result<Raw<'de>, E> {
                Ok(Raw(v))
            }
        }
        d.deserialize_bytes(V)
    }
}

/// Payload of format version 1 (field order is the wire order).
#[derive(Serialize, Deserialize)]
struct PayloadV1<'a> {
    name: &'a str,
    #[serde(borrow)]
    description: Option<&'a str>,
    flow_axis: u8,
    length_m: f64,
    area_m2: f64,
    bulk_volume_m3: f64,
    extent_m: Option<[f64; 3]>,
    n_pores: u64,
    n_throats: u64,
    #[serde(borrow)]
    pore_x: Raw<'a>,
    #[serde(borrow)]
    pore_y: Raw<'a>,
    #[serde(borrow)]
    pore_z: Raw<'a>,
    #[serde(borrow)]
    pore_radius: Raw<'a>,
    #[serde(borrow)]
    pore_shape_factor: Raw<'a>,
    #[serde(borrow)]
    pore_volume: Raw<'a>,
    #[serde(borrow)]
    pore_clay_volume: Raw<'a>,
    #[serde(borrow)]
    pore_boundary: Raw<'a>,
    #[serde(borrow)]
    throat_pores: Raw<'a>,
    #[serde(borrow)]
    throat_radius: Raw<'a>,
    #[serde(borrow)]
    throat_shape_factor: Raw<'a>,
    #[serde(borrow)]
    throat_volume: Raw<'a>,
    #[serde(borrow)]
    throat_clay_volume: Raw<'a>,
    #[serde(borrow)]
    throat_length: Raw<'a>,
    #[serde(borrow)]
    throat_conduit_a: Raw<'a>,
    #[serde(borrow)]
    throat_conduit_b: Raw<'a>,
}

fn f64_bytes(v: &[f64]) -> Vec<u8> {
    let mut out = Vec::with_capacity(8 * v.len());
    for x in v {
        out.extend_from_slice(&x.to_le_bytes());
    }
    out
}

/// Byte columns of a network in wire order (pore columns, boundary, throat
/// ends, throat columns).
struct Columns(Vec<Vec<u8>>);

impl Columns {
    fn of(network: &Network) -> Columns {
        let p = network.pores();
        let t = network.throats();
        let floats: [&[f64]; 14] = [
            &p.x,
            &p.y,
            &p.z,
            &p.radius,
            &p.shape_factor,
            &p.volume,
            &p.clay_volume,
            &t.radius,
            &t.shape_factor,
            &t.volume,
            &t.clay_volume,
            &t.length,
            &t.conduit_a,
            &t.conduit_b,
        ];
        let mut encoded: Vec<Vec<u8>> = floats.par_iter().map(|c| f64_bytes(c)).collect();
        let boundary: Vec<u8> = p.boundary.iter().map(|&b| b as u8).collect();
        let mut ends = Vec::with_capacity(8 * t.len());
        for [a, b] in &t.pores {
            ends.extend_from_slice(&a.to_le_bytes());
            ends.extend_from_slice(&b.to_le_bytes());
        }
        let throat_cols = encoded.split_off(7);
        let mut all = encoded;
        all.push(boundary);
        all.push(ends);
        all.extend(throat_cols);
        Columns(all)
    }

    fn payload<'a>(
        &'a self,
        info: &'a NetworkInfo,
        n_pores: usize,
        n_throats: usize,
    ) -> PayloadV1<'a> {
        let c = &self.0;
        PayloadV1 {
            name: &info.name,
            description: info.description.as_deref(),
            flow_axis: info.flow_axis.index() as u8,
            length_m: info.length_m,
            area_m2: info.area_m2,
            bulk_volume_m3: info.bulk_volume_m3,
            extent_m: info.extent_m,
            n_pores: n_pores as u64,
            n_throats: n_throats as u64,
            pore_x: Raw(&c[0]),
            pore_y: Raw(&c[1]),
            pore_z: Raw(&c[2]),
            pore_radius: Raw(&c[3]),
            pore_shape_factor: Raw(&c[4]),
            pore_volume: Raw(&c[5]),
            pore_clay_volume: Raw(&c[6]),
            pore_boundary: Raw(&c[7]),
            throat_pores: Raw(&c[8]),
            throat_radius: Raw(&c[9]),
            throat_shape_factor: Raw(&c[10]),
            throat_volume: Raw(&c[11]),
            throat_clay_volume: Raw(&c[12]),
            throat_length: Raw(&c[13]),
            throat_conduit_a: Raw(&c[14]),
            throat_conduit_b: Raw(&c[15]),
        }
    }
}

/// The encoded file: header, payload and checksum.
pub(crate) fn encode(network: &Network) -> Vec<u8> {
    let cols = Columns::of(network);
    frame(&cols.payload(network.info(), network.n_pores(), network.n_throats()))
}

/// Header, the encoded `payload` and its checksum.
fn frame(payload: &PayloadV1<'_>) -> Vec<u8> {
    let mut out = Vec::new();
    out.extend_from_slice(&MAGIC);
    out.extend_from_slice(&FORMAT_VERSION.to_le_bytes());
    out.extend_from_slice(&0u64.to_le_bytes());
    let mut out =
        postcard::to_extend(payload, out).expect("postcard encodes into a Vec without size limit");
    let n = (out.len() - HEADER_LEN) as u64;
    out[12..20].copy_from_slice(&n.to_le_bytes());
    let crc = crc32fast::hash(&out[HEADER_LEN..]);
    out.extend_from_slice(&crc.to_le_bytes());
    out
}

/// Writes the binary file atomically.
pub(crate) fn write_file(network: &Network, path: &Path) -> Result<(), WriteError> {
    let err = |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    let bytes = encode(network);
    let mut file = AtomicFile::create(path).map_err(err)?;
    file.write_all(&bytes).map_err(err)?;
    drop(bytes);
    file.commit().map_err(err)
}

fn refuse(path: &Path, detail: String) -> ReadError {
    let mut v = Violation::new(Rule::BadBinary, Target::Network, None, detail);
    v.file = Some(path.display().to_string());
    ReadError::Invalid {
        path: path.to_path_buf(),
        violations: vec![v],
    }
}

/// True when `bytes` starts with the binary magic.
pub(crate) fn has_magic(bytes: &[u8]) -> bool {
    bytes.len() >= MAGIC.len() && bytes[..MAGIC.len()] == MAGIC
}

/// Bytes of a column of `n` elements of `width` bytes, refused when the
/// product overflows (a crafted count must not wrap to a small size).
fn column_bytes(n: usize, width: u64, what: &str) -> Result<u64, String> {
    (n as u64).checked_mul(width).ok_or_else(|| {
        format!("declared {what} count {n} overflows when multiplied by {width} bytes per element")
    })
}

fn f64_column(raw: Raw<'_>, n: usize, what: &str) -> Result<Vec<f64>, String> {
    let expected = column_bytes(n, 8, what)?;
    if raw.0.len() as u64 != expected {
        return Err(format!(
            "column {what} holds {} bytes, expected {expected} (8 per element)",
            raw.0.len(),
        ));
    }
    Ok(raw
        .0
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes([c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]]))
        .collect())
}

/// Decodes a whole binary file held in `bytes` (read from `path`).
pub(crate) fn decode(bytes: &[u8], path: &Path) -> Result<Loaded, ReadError> {
    if !has_magic(bytes) {
        if bytes.len() < MAGIC.len() && MAGIC.starts_with(bytes) {
            return Err(refuse(
                path,
                format!("truncated: the file holds only {} bytes", bytes.len()),
            ));
        }
        return Err(refuse(
            path,
            "not a Ganglion network file: it does not start with the bytes `GANGLNET` \
             (a CSV network is a folder holding pores.csv, throats.csv and network.toml)"
                .to_owned(),
        ));
    }
    if bytes.len() < HEADER_LEN {
        return Err(refuse(
            path,
            format!(
                "truncated: the file holds {} bytes, shorter than the {HEADER_LEN}-byte header",
                bytes.len()
            ),
        ));
    }
    let version = u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]);
    if version > FORMAT_VERSION {
        return Err(refuse(
            path,
            format!(
                "format version {version} is newer than this build reads \
                 (up to {FORMAT_VERSION}); use a newer Ganglion"
            ),
        ));
    }
    if version == 0 {
        return Err(refuse(
            path,
            "corrupt: format version 0 does not exist".to_owned(),
        ));
    }
    let mut len_bytes = [0u8; 8];
    len_bytes.copy_from_slice(&bytes[12..20]);
    let n_payload = u64::from_le_bytes(len_bytes);
    let expected = n_payload.saturating_add((HEADER_LEN + TRAILER_LEN) as u64);
    if (bytes.len() as u64) < expected {
        return Err(refuse(
            path,
            format!(
                "truncated: the file holds {} bytes, its header announces {expected}",
                bytes.len()
            ),
        ));
    }
    if bytes.len() as u64 > expected {
        return Err(refuse(
            path,
            format!(
                "corrupt: {} unexpected bytes after the checksum",
                bytes.len() as u64 - expected
            ),
        ));
    }
    let end = HEADER_LEN + n_payload as usize;
    let payload = &bytes[HEADER_LEN..end];
    let stored = u32::from_le_bytes([bytes[end], bytes[end + 1], bytes[end + 2], bytes[end + 3]]);
    let computed = crc32fast::hash(payload);
    if stored != computed {
        return Err(refuse(
            path,
            format!("corrupt: checksum mismatch (stored {stored:08x}, computed {computed:08x})"),
        ));
    }
    let network = decode_payload(payload)
        .map_err(|detail| refuse(path, format!("corrupt payload: {detail}")))?
        .map_err(|invalid| ReadError::Invalid {
            path: path.to_path_buf(),
            violations: invalid.violations,
        })?;
    let warnings = network_warnings(&network, &|_| (None, None));
    Ok(Loaded { network, warnings })
}

type Decoded = Result<Network, crate::network::InvalidNetwork>;

fn decode_payload(payload: &[u8]) -> Result<Decoded, String> {
    let (p, rest): (PayloadV1<'_>, &[u8]) =
        postcard::take_from_bytes(payload).map_err(|e| e.to_string())?;
    if !rest.is_empty() {
        return Err(format!("{} unused bytes at the end", rest.len()));
    }
    // Ids are u32: a larger declared count cannot be a network of ours.
    let count = |n: u64, what: &str| {
        u32::try_from(n).map(|n| n as usize).map_err(|_| {
            format!(
                "declared {what} count {n} exceeds the largest id {}",
                u32::MAX
            )
        })
    };
    let n_p = count(p.n_pores, "pore")?;
    let n_t = count(p.n_throats, "throat")?;
    let flow_axis = match p.flow_axis {
        0 => Axis::X,
        1 => Axis::Y,
        2 => Axis::Z,
        a => return Err(format!("flow axis code {a} is not 0, 1 or 2")),
    };
    if p.pore_boundary.0.len() != n_p {
        return Err(format!(
            "boundary column holds {} bytes, expected {n_p}",
            p.pore_boundary.0.len()
        ));
    }
    let boundary = p
        .pore_boundary
        .0
        .iter()
        .map(|&b| match b {
            0 => Ok(Boundary::Interior),
            1 => Ok(Boundary::Inlet),
            2 => Ok(Boundary::Outlet),
            _ => Err(format!("boundary code {b} is not 0, 1 or 2")),
        })
        .collect::<Result<Vec<Boundary>, String>>()?;
    let ends_bytes = column_bytes(n_t, 8, "throat")?;
    if p.throat_pores.0.len() as u64 != ends_bytes {
        return Err(format!(
            "throat end column holds {} bytes, expected {ends_bytes}",
            p.throat_pores.0.len(),
        ));
    }
    let ends: Vec<[u32; 2]> = p
        .throat_pores
        .0
        .chunks_exact(8)
        .map(|c| {
            [
                u32::from_le_bytes([c[0], c[1], c[2], c[3]]),
                u32::from_le_bytes([c[4], c[5], c[6], c[7]]),
            ]
        })
        .collect();
    // The 14 float columns, decoded in parallel (fixed order).
    let raw = [
        (p.pore_x, n_p, "pore x"),
        (p.pore_y, n_p, "pore y"),
        (p.pore_z, n_p, "pore z"),
        (p.pore_radius, n_p, "pore radius"),
        (p.pore_shape_factor, n_p, "pore shape factor"),
        (p.pore_volume, n_p, "pore volume"),
        (p.pore_clay_volume, n_p, "pore clay volume"),
        (p.throat_radius, n_t, "throat radius"),
        (p.throat_shape_factor, n_t, "throat shape factor"),
        (p.throat_volume, n_t, "throat volume"),
        (p.throat_clay_volume, n_t, "throat clay volume"),
        (p.throat_length, n_t, "throat length"),
        (p.throat_conduit_a, n_t, "throat conduit a"),
        (p.throat_conduit_b, n_t, "throat conduit b"),
    ];
    let decoded: Vec<Result<Vec<f64>, String>> = raw
        .par_iter()
        .map(|&(r, n, what)| f64_column(r, n, what))
        .collect();
    let mut cols = decoded
        .into_iter()
        .collect::<Result<Vec<Vec<f64>>, String>>()?
        .into_iter();
    let mut next = || cols.next().unwrap_or_default();
    let pores = Pores {
        x: next(),
        y: next(),
        z: next(),
        radius: next(),
        shape_factor: next(),
        volume: next(),
        clay_volume: next(),
        boundary,
        oil_wet: None,
    };
    let throats = Throats {
        pores: ends,
        radius: next(),
        shape_factor: next(),
        volume: next(),
        clay_volume: next(),
        length: next(),
        conduit_a: next(),
        conduit_b: next(),
        oil_wet: None,
    };
    let info = NetworkInfo {
        name: p.name.to_owned(),
        flow_axis,
        length_m: p.length_m,
        area_m2: p.area_m2,
        bulk_volume_m3: p.bulk_volume_m3,
        extent_m: p.extent_m,
        description: p.description.map(str::to_owned),
    };
    Ok(Network::new(info, pores, throats))
}

/// A 64-bit digest over a byte stream, fed in any split: each 8-byte
/// little-endian word `w` updates `h ← splitmix64(h ⊕ w)` (SplitMix64
/// finaliser, Steele, Lea & Flood 2014, OOPSLA); the tail is zero-padded and
/// the byte count mixed in last. Not cryptographic: it identifies content,
/// it does not authenticate it.
pub(crate) struct Digest {
    h: u64,
    pending: [u8; 8],
    n_pending: usize,
    total: u64,
}

impl Digest {
    pub(crate) fn new(seed: u64) -> Digest {
        Digest {
            h: crate::numeric::splitmix64(seed),
            pending: [0; 8],
            n_pending: 0,
            total: 0,
        }
    }

    fn word(&mut self, w: [u8; 8]) {
        self.h = crate::numeric::splitmix64(self.h ^ u64::from_le_bytes(w));
    }

    pub(crate) fn update(&mut self, mut data: &[u8]) {
        self.total += data.len() as u64;
        if self.n_pending > 0 {
            let take = (8 - self.n_pending).min(data.len());
            self.pending[self.n_pending..self.n_pending + take].copy_from_slice(&data[..take]);
            self.n_pending += take;
            data = &data[take..];
            if self.n_pending < 8 {
                return;
            }
            let w = self.pending;
            self.word(w);
            self.n_pending = 0;
        }
        let mut words = data.chunks_exact(8);
        for c in &mut words {
            self.word([c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]]);
        }
        let tail = words.remainder();
        self.pending[..tail.len()].copy_from_slice(tail);
        self.n_pending = tail.len();
    }

    pub(crate) fn finish(mut self) -> u64 {
        if self.n_pending > 0 {
            let mut w = [0u8; 8];
            w[..self.n_pending].copy_from_slice(&self.pending[..self.n_pending]);
            self.word(w);
        }
        crate::numeric::splitmix64(self.h ^ self.total)
    }
}

impl Write for Digest {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.update(buf);
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

/// The digest of the version-1 payload of `network` (see [`super::network_hash`]).
pub(crate) fn payload_digest(network: &Network) -> u64 {
    let cols = Columns::of(network);
    let payload = cols.payload(network.info(), network.n_pores(), network.n_throats());
    let digest = Digest::new(FORMAT_VERSION as u64);
    let digest = postcard::to_io(&payload, digest).expect("writing into a digest cannot fail");
    digest.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A file with one valid pore, a valid checksum and `n_throats`
    /// declared over empty throat columns.
    fn crafted(n_pores: u64, n_throats: u64) -> Vec<u8> {
        let one = 1e-5f64.to_le_bytes();
        let g = 0.04f64.to_le_bytes();
        let zero = 0f64.to_le_bytes();
        let empty: &[u8] = &[];
        frame(&PayloadV1 {
            name: "crafted",
            description: None,
            flow_axis: 0,
            length_m: 1e-4,
            area_m2: 1e-8,
            bulk_volume_m3: 1e-12,
            extent_m: None,
            n_pores,
            n_throats,
            pore_x: Raw(&zero),
            pore_y: Raw(&zero),
            pore_z: Raw(&zero),
            pore_radius: Raw(&one),
            pore_shape_factor: Raw(&g),
            pore_volume: Raw(&one),
            pore_clay_volume: Raw(&zero),
            pore_boundary: Raw(&[1]),
            throat_pores: Raw(empty),
            throat_radius: Raw(empty),
            throat_shape_factor: Raw(empty),
            throat_volume: Raw(empty),
            throat_clay_volume: Raw(empty),
            throat_length: Raw(empty),
            throat_conduit_a: Raw(empty),
            throat_conduit_b: Raw(empty),
        })
    }

    #[test]
    fn issue_18_declared_counts_that_overflow_are_refused_before_any_allocation() {
        let path = Path::new("crafted.gnet");
        // 2^61 throats × 8 bytes wraps to 0 in 64 bits, matching the empty
        // columns; 2^32 exceeds every u32 id.
        for (n_p, n_t) in [
            (1, 1u64 << 61),
            (1, u64::MAX),
            (1, 1u64 << 32),
            (1u64 << 61, 0),
        ] {
            let err = decode(&crafted(n_p, n_t), path).unwrap_err().to_string();
            assert!(
                err.contains("declared") && err.contains("count"),
                "{n_p} pores, {n_t} throats: {err}"
            );
        }
    }

    #[test]
    fn digest_does_not_depend_on_how_bytes_are_split() {
        let data: Vec<u8> = (0..1000u32).map(|i| (i * 7 % 251) as u8).collect();
        let mut one = Digest::new(1);
        one.update(&data);
        let mut many = Digest::new(1);
        for piece in data.chunks(3) {
            many.update(piece);
        }
        assert_eq!(one.finish(), many.finish());
    }

    #[test]
    fn digest_sees_length_and_every_byte() {
        let hash = |d: &[u8]| {
            let mut h = Digest::new(1);
            h.update(d);
            h.finish()
        };
        assert_ne!(hash(b"abc"), hash(b"abc\0"));
        assert_ne!(hash(b"abcdefgh1"), hash(b"abcdefgh2"));
        assert_ne!(hash(b""), hash(b"\0"));
    }
}

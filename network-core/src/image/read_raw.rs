//! Raw binary volumes described by a TOML sidecar.
//!
//! A raw volume is a header of `header_bytes` bytes (skipped) followed by
//! `nx × ny × nz` samples, x fastest, then y, then z, each sample an
//! unsigned 8- or 16-bit integer. Nothing else may follow. The sidecar
//! (by convention the image path with `.toml` appended) says how to read it:
//!
//! ```toml
//! dims = [120, 120, 120]      # nx, ny, nz (required)
//! voxel_size_m = 3.0e-6       # voxel edge, m (required)
//! sample_type = "u8"          # "u8" or "u16" (default "u8")
//! byte_order = "little"       # "little" or "big" (default "little"; u16 only)
//! header_bytes = 0            # bytes to skip before the samples (default 0)
//! solid_label = 0             # value of solid voxels (default 0)
//! pore_label = 1              # value of pore voxels (default 1)
//! water_label = 2             # optional: water-filled pore voxels
//! oil_label = 3               # optional: voxels of the non-aqueous phase
//! ```
//!
//! Unknown keys are refused, so a misspelt key never goes unnoticed. A label
//! key may be set to `-1` to say that the label does not occur.

use std::io::Read;
use std::path::Path;

use super::ImageError;
use super::volume::{Labels, Volume, check_dims, check_voxel_size};

/// The width of one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SampleType {
    /// Unsigned 8-bit (`"u8"`).
    U8,
    /// Unsigned 16-bit (`"u16"`).
    U16,
}

impl SampleType {
    /// Bytes per sample.
    pub fn bytes(self) -> usize {
        match self {
            SampleType::U8 => 1,
            SampleType::U16 => 2,
        }
    }

    /// The sidecar spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            SampleType::U8 => "u8",
            SampleType::U16 => "u16",
        }
    }
}

/// Byte order of multi-byte samples.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ByteOrder {
    /// Least significant byte first (`"little"`).
    Little,
    /// Most significant byte first (`"big"`).
    Big,
}

impl ByteOrder {
    /// The sidecar spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            ByteOrder::Little => "little",
            ByteOrder::Big => "big",
        }
    }
}

/// The content of a sidecar: how to read a raw volume and what its labels
/// mean.
#[derive(Clone, Debug, PartialEq)]
pub struct RawSpec {
    /// `[nx, ny, nz]`.
    pub dims: [usize; 3],
    /// Voxel edge, m.
    pub voxel_size_m: f64,
    /// Sample width.
    pub sample_type: SampleType,
    /// Byte order of 16-bit samples.
    pub byte_order: ByteOrder,
    /// Bytes skipped before the samples.
    pub header_bytes: u64,
    /// The label table.
    pub labels: Labels,
}

impl RawSpec {
    /// The sidecar text for this spec (parsed back by
    /// [`parse_sidecar`] to the same spec).
    pub fn to_toml(&self) -> String {
        let label = |v: Option<u16>| v.map_or(-1, i64::from);
        let mut s = format!(
            "dims = [{}, {}, {}]\nvoxel_size_m = {:e}\nsample_type = \"{}\"\nbyte_order = \"{}\"\nheader_bytes = {}\n",
            self.dims[0],
            self.dims[1],
            self.dims[2],
            self.voxel_size_m,
            self.sample_type.as_str(),
            self.byte_order.as_str(),
            self.header_bytes
        );
        for (key, v) in [
            ("solid_label", self.labels.solid),
            ("pore_label", self.labels.pore),
            ("water_label", self.labels.water),
            ("oil_label", self.labels.oil),
        ] {
            s.push_str(&format!("{key} = {}\n", label(v)));
        }
        s
    }

    /// Bytes of sample data the spec announces.
    pub fn data_bytes(&self) -> u64 {
        (self.dims[0] * self.dims[1] * self.dims[2] * self.sample_type.bytes()) as u64
    }
}

const KEYS: [&str; 9] = [
    "dims",
    "voxel_size_m",
    "sample_type",
    "byte_order",
    "header_bytes",
    "solid_label",
    "pore_label",
    "water_label",
    "oil_label",
];

/// 1-based line of the first line of `text` that sets `key`.
fn line_of(text: &str, key: &str) -> Option<usize> {
    text.lines()
        .position(|l| {
            l.trim_start()
                .strip_prefix(key)
                .is_some_and(|r| r.trim_start().starts_with('='))
        })
        .map(|i| i + 1)
}

/// Parses a sidecar. `path` names it in errors; every error names the key
/// and its line.
pub fn parse_sidecar(text: &str, path: &Path) -> Result<RawSpec, ImageError> {
    let table: toml::Table = text.parse().map_err(|e: toml::de::Error| {
        ImageError::bad_field(path, "TOML", e.message(), "a valid TOML document")
    })?;
    let field = |key: &str| match line_of(text, key) {
        Some(l) => format!("{key} (line {l})"),
        None => key.to_string(),
    };
    let bad = |key: &str, value: &toml::Value, expected: &str| {
        ImageError::bad_field(path, field(key), value, expected)
    };
    for key in table.keys() {
        if !KEYS.contains(&key.as_str()) {
            return Err(ImageError::bad_field(
                path,
                field(key),
                &table[key],
                format!("a known key ({})", KEYS.join(", ")),
            ));
        }
    }
    let missing = |key: &str| ImageError::bad_field(path, key, "missing", "a value (required)");
    let dims_v = table.get("dims").ok_or_else(|| missing("dims"))?;
    let dims = match dims_v.as_array() {
        Some(a) if a.len() == 3 => {
            let mut d = [0usize; 3];
            for (k, v) in a.iter().enumerate() {
                d[k] = match v.as_integer() {
                    Some(n) if n >= 1 => n as usize,
                    _ => return Err(bad("dims", dims_v, "three integers >= 1: [nx, ny, nz]")),
                };
            }
            d
        }
        _ => return Err(bad("dims", dims_v, "three integers >= 1: [nx, ny, nz]")),
    };
    check_dims(dims, path).map_err(|_| bad("dims", dims_v, "at most 2^32 - 1 voxels"))?;
    let vs_v = table
        .get("voxel_size_m")
        .ok_or_else(|| missing("voxel_size_m"))?;
    let voxel_size_m = match vs_v.as_float().or(vs_v.as_integer().map(|i| i as f64)) {
        Some(v) => v,
        None => return Err(bad("voxel_size_m", vs_v, "a length in metres")),
    };
    check_voxel_size(voxel_size_m, path)
        .map_err(|_| bad("voxel_size_m", vs_v, "a finite length > 0 in metres"))?;
    let sample_type = match table.get("sample_type") {
        None => SampleType::U8,
        Some(v) => match v.as_str() {
            Some("u8") => SampleType::U8,
            Some("u16") => SampleType::U16,
            _ => return Err(bad("sample_type", v, "\"u8\" or \"u16\"")),
        },
    };
    let byte_order = match table.get("byte_order") {
        None => ByteOrder::Little,
        Some(v) => match v.as_str() {
            Some("little") => ByteOrder::Little,
            Some("big") => ByteOrder::Big,
            _ => return Err(bad("byte_order", v, "\"little\" or \"big\"")),
        },
    };
    let header_bytes = match table.get("header_bytes") {
        None => 0,
        Some(v) => match v.as_integer() {
            Some(n) if n >= 0 => n as u64,
            _ => return Err(bad("header_bytes", v, "an integer >= 0")),
        },
    };
    let max_label = match sample_type {
        SampleType::U8 => 255,
        SampleType::U16 => 65535,
    };
    let label = |key: &str, default: Option<u16>| -> Result<Option<u16>, ImageError> {
        match table.get(key) {
            None => Ok(default),
            Some(v) => match v.as_integer() {
                Some(-1) => Ok(None),
                Some(n) if (0..=max_label).contains(&n) => Ok(Some(n as u16)),
                _ => Err(bad(
                    key,
                    v,
                    &format!(
                        "an integer in 0..={max_label} (the {} range), or -1 for none",
                        sample_type.as_str()
                    ),
                )),
            },
        }
    };
    let labels = Labels {
        solid: label("solid_label", Some(0))?,
        pore: label("pore_label", Some(1))?,
        water: label("water_label", None)?,
        oil: label("oil_label", None)?,
    };
    labels.validate(path)?;
    Ok(RawSpec {
        dims,
        voxel_size_m,
        sample_type,
        byte_order,
        header_bytes,
        labels,
    })
}

/// Fills `buf` from `reader` as far as the source allows; returns the bytes
/// read.
pub(crate) fn read_full(
    reader: &mut impl Read,
    buf: &mut [u8],
    path: &Path,
) -> Result<usize, ImageError> {
    let mut filled = 0;
    while filled < buf.len() {
        match reader.read(&mut buf[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => {
                return Err(ImageError::Io {
                    path: path.to_path_buf(),
                    source: e,
                });
            }
        }
    }
    Ok(filled)
}

/// Reads the samples of `spec` from `reader` in blocks (the whole file is
/// never held twice). Refuses a source shorter than the header plus the
/// samples, and one with bytes after them (the dimensions are then wrong).
pub fn read_raw(mut reader: impl Read, spec: &RawSpec, path: &Path) -> Result<Volume, ImageError> {
    let n = check_dims(spec.dims, path)?;
    let expected = spec.header_bytes + spec.data_bytes();
    let mut header = vec![0u8; 1 << 16];
    let mut left = spec.header_bytes;
    while left > 0 {
        let take = left.min(header.len() as u64) as usize;
        let got = read_full(&mut reader, &mut header[..take], path)?;
        if got < take {
            return Err(ImageError::Truncated {
                path: path.to_path_buf(),
                what: "header and samples".into(),
                expected,
                found: spec.header_bytes - left + got as u64,
            });
        }
        left -= take as u64;
    }
    let width = spec.sample_type.bytes();
    // Grown as samples arrive: a sidecar that announces more than the file
    // holds costs no more memory than the file.
    let mut values = Vec::with_capacity(n.min(1 << 24));
    let mut block = vec![0u8; (1 << 20) * width];
    while values.len() < n {
        let take = ((n - values.len()) * width).min(block.len());
        let got = read_full(&mut reader, &mut block[..take], path)?;
        if got < take {
            return Err(ImageError::Truncated {
                path: path.to_path_buf(),
                what: "header and samples".into(),
                expected,
                found: spec.header_bytes + (values.len() * width + got) as u64,
            });
        }
        decode_samples(
            &block[..take],
            spec.sample_type,
            spec.byte_order,
            &mut values,
        );
    }
    let mut extra = [0u8; 1];
    if read_full(&mut reader, &mut extra, path)? > 0 {
        return Err(ImageError::bad_field(
            path,
            "dims",
            format!("[{}, {}, {}]", spec.dims[0], spec.dims[1], spec.dims[2]),
            format!(
                "dimensions that use the whole file (it is longer than the {expected} bytes of header and samples)"
            ),
        ));
    }
    Volume::new(spec.dims, spec.voxel_size_m, values, path)
}

/// Appends the samples of `bytes` to `out`.
pub(crate) fn decode_samples(
    bytes: &[u8],
    sample_type: SampleType,
    order: ByteOrder,
    out: &mut Vec<u16>,
) {
    match (sample_type, order) {
        (SampleType::U8, _) => out.extend(bytes.iter().map(|&b| u16::from(b))),
        (SampleType::U16, ByteOrder::Little) => out.extend(
            bytes
                .chunks_exact(2)
                .map(|c| u16::from_le_bytes([c[0], c[1]])),
        ),
        (SampleType::U16, ByteOrder::Big) => out.extend(
            bytes
                .chunks_exact(2)
                .map(|c| u16::from_be_bytes([c[0], c[1]])),
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec_text() -> &'static str {
        "dims = [2, 3, 2]\nvoxel_size_m = 2e-6\nsample_type = \"u16\"\nbyte_order = \"big\"\nheader_bytes = 4\n"
    }

    #[test]
    fn sidecar_round_trips_through_text() {
        let spec = parse_sidecar(spec_text(), Path::new("a.toml")).unwrap();
        assert_eq!(spec.dims, [2, 3, 2]);
        assert_eq!(spec.sample_type, SampleType::U16);
        let again = parse_sidecar(&spec.to_toml(), Path::new("b.toml")).unwrap();
        assert_eq!(spec, again);
    }

    #[test]
    fn sidecar_errors_name_key_line_and_value() {
        let text = "dims = [2, 3, 2]\nvoxel_size_m = 2e-6\npore_labl = 1\n";
        let e = parse_sidecar(text, Path::new("s.toml"))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("s.toml") && e.contains("pore_labl (line 3)"),
            "{e}"
        );
        let text = "dims = [2, 0, 2]\nvoxel_size_m = 2e-6\n";
        let e = parse_sidecar(text, Path::new("s.toml"))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("dims (line 1)") && e.contains("[2, 0, 2]"),
            "{e}"
        );
        let text = "dims = [2, 2, 2]\nvoxel_size_m = 2e-6\npore_label = 300\n";
        let e = parse_sidecar(text, Path::new("s.toml"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("pore_label (line 3) = 300"), "{e}");
        let e = parse_sidecar("dims = [1,1,1]\n", Path::new("s.toml"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("voxel_size_m = missing"), "{e}");
    }

    #[test]
    fn big_endian_u16_with_header_decodes() {
        let spec = parse_sidecar(spec_text(), Path::new("a.toml")).unwrap();
        let mut bytes = vec![9, 9, 9, 9];
        for v in 0u16..12 {
            bytes.extend_from_slice(&(v * 300).to_be_bytes());
        }
        let vol = read_raw(&bytes[..], &spec, Path::new("a.raw")).unwrap();
        assert_eq!(vol.values()[11], 3300);
        assert_eq!(vol.values()[1], 300);
    }

    #[test]
    fn truncated_and_overlong_files_are_refused() {
        let spec = parse_sidecar(spec_text(), Path::new("a.toml")).unwrap();
        let bytes = [0u8; 4 + 23];
        let e = read_raw(&bytes[..], &spec, Path::new("a.raw"))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("a.raw") && e.contains("expected 28") && e.contains("found 27"),
            "{e}"
        );
        let bytes = [0u8; 29];
        let e = read_raw(&bytes[..], &spec, Path::new("a.raw"))
            .unwrap_err()
            .to_string();
        assert!(e.contains("dims") && e.contains("longer"), "{e}");
    }
}

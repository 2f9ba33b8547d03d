//! NumPy `.npy` arrays (format versions 1, 2 and 3).
//!
//! The file is the magic `\x93NUMPY`, a version, a header length and a
//! header that is a Python dict literal with the keys `descr` (the element
//! type), `fortran_order` and `shape`, then the elements. Accepted element
//! types: `u1`, `i1`, `b1`, `u2`, `i2`, `u4`, `i4`, `u8`, `i8` in either byte
//! order; every value must lie in `0..=65535` (a label). A C-order array of
//! shape `(nz, ny, nx)` is read as a volume of dimensions `[nx, ny, nz]`; a
//! Fortran-order array of shape `(nx, ny, nz)` likewise (in both, the last
//! or first axis is the fastest and becomes x). A 2-D array is one slice
//! (`nz = 1`).

use std::io::Read;
use std::path::Path;

use super::ImageError;
use super::read_raw::read_full;
use super::volume::{Volume, check_dims};

/// The element type of an array.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Descr {
    /// Bytes per element: 1, 2, 4 or 8.
    pub width: usize,
    /// Signed integer.
    pub signed: bool,
    /// Big-endian (false: little-endian or single byte).
    pub big_endian: bool,
}

/// The parsed header of an `.npy` file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NpyHeader {
    /// Element type.
    pub descr: Descr,
    /// Column-major storage.
    pub fortran_order: bool,
    /// The shape as written.
    pub shape: Vec<usize>,
    /// Bytes from the start of the file to the first element.
    pub data_offset: u64,
}

impl NpyHeader {
    /// Volume dimensions `[nx, ny, nz]` of the array.
    pub fn dims(&self) -> [usize; 3] {
        let s = &self.shape;
        match (s.len(), self.fortran_order) {
            (3, false) => [s[2], s[1], s[0]],
            (3, true) => [s[0], s[1], s[2]],
            (2, false) => [s[1], s[0], 1],
            (2, true) => [s[0], s[1], 1],
            _ => [0, 0, 0],
        }
    }
}

fn header_error(path: &Path, what: &str, found: &str) -> ImageError {
    ImageError::bad_field(
        path,
        format!("npy header {what}"),
        found,
        npy_expected(what),
    )
}

fn npy_expected(what: &str) -> String {
    match what {
        "magic" => "the bytes \\x93NUMPY".into(),
        "version" => "1.0, 2.0 or 3.0".into(),
        "descr" => "an integer type: u1 i1 b1 u2 i2 u4 i4 u8 i8 with < > | or = byte order".into(),
        "fortran_order" => "True or False".into(),
        "shape" => "a 2- or 3-tuple of integers >= 1".into(),
        _ => "a Python dict with keys 'descr', 'fortran_order', 'shape'".into(),
    }
}

/// Reads and parses the header; leaves `reader` at the first element.
pub fn read_npy_header(reader: &mut impl Read, path: &Path) -> Result<NpyHeader, ImageError> {
    let mut pre = [0u8; 8];
    let got = read_full(reader, &mut pre, path)?;
    if got < 8 {
        return Err(ImageError::Truncated {
            path: path.to_path_buf(),
            what: "npy preamble".into(),
            expected: 8,
            found: got as u64,
        });
    }
    if &pre[..6] != b"\x93NUMPY" {
        return Err(header_error(path, "magic", &format!("{:?}", &pre[..6])));
    }
    let (len_bytes, major) = match pre[6] {
        1 => (2usize, 1),
        2 | 3 => (4, pre[6]),
        v => return Err(header_error(path, "version", &format!("{v}.{}", pre[7]))),
    };
    let mut len_buf = [0u8; 4];
    let got = read_full(reader, &mut len_buf[..len_bytes], path)?;
    if got < len_bytes {
        return Err(ImageError::Truncated {
            path: path.to_path_buf(),
            what: "npy header length".into(),
            expected: (8 + len_bytes) as u64,
            found: (8 + got) as u64,
        });
    }
    let header_len = u32::from_le_bytes(len_buf) as usize;
    if header_len > 1 << 20 {
        return Err(header_error(path, "length", &header_len.to_string()));
    }
    let mut text = vec![0u8; header_len];
    let got = read_full(reader, &mut text, path)?;
    if got < header_len {
        return Err(ImageError::Truncated {
            path: path.to_path_buf(),
            what: "npy header".into(),
            expected: (8 + len_bytes + header_len) as u64,
            found: (8 + len_bytes + got) as u64,
        });
    }
    let text = match (major, std::str::from_utf8(&text)) {
        (_, Ok(t)) => t,
        (_, Err(_)) => return Err(header_error(path, "text", "bytes that are not text")),
    };
    let mut h = parse_header_text(text, path)?;
    h.data_offset = (8 + len_bytes + header_len) as u64;
    Ok(h)
}

/// The value text after `'key':` in a dict literal.
fn value_after<'a>(text: &'a str, key: &str) -> Option<&'a str> {
    let at = text
        .find(&format!("'{key}'"))
        .or_else(|| text.find(&format!("\"{key}\"")))?;
    let rest = &text[at + key.len() + 2..];
    let rest = rest.trim_start().strip_prefix(':')?;
    Some(rest.trim_start())
}

/// Parses the dict literal of a header.
pub fn parse_header_text(text: &str, path: &Path) -> Result<NpyHeader, ImageError> {
    let t = text.trim_end_matches(['\n', ' ', '\0']).trim();
    if !(t.starts_with('{') && t.ends_with('}')) {
        return Err(header_error(path, "text", t));
    }
    let descr_text =
        value_after(t, "descr").ok_or_else(|| header_error(path, "descr", "missing"))?;
    let quote = descr_text.chars().next().unwrap_or(' ');
    if quote != '\'' && quote != '"' {
        return Err(header_error(path, "descr", descr_text));
    }
    let descr_str = descr_text[1..]
        .split(quote)
        .next()
        .ok_or_else(|| header_error(path, "descr", descr_text))?;
    let descr = parse_descr(descr_str).ok_or_else(|| header_error(path, "descr", descr_str))?;
    let fo = value_after(t, "fortran_order")
        .ok_or_else(|| header_error(path, "fortran_order", "missing"))?;
    let fortran_order = if fo.starts_with("True") {
        true
    } else if fo.starts_with("False") {
        false
    } else {
        return Err(header_error(path, "fortran_order", fo));
    };
    let sh = value_after(t, "shape").ok_or_else(|| header_error(path, "shape", "missing"))?;
    let inner = sh
        .strip_prefix('(')
        .and_then(|r| r.split(')').next())
        .ok_or_else(|| header_error(path, "shape", sh))?;
    let mut shape = Vec::new();
    for part in inner.split(',') {
        let p = part.trim();
        if p.is_empty() {
            continue;
        }
        match p.trim_end_matches('L').parse::<usize>() {
            Ok(n) if n >= 1 => shape.push(n),
            _ => return Err(header_error(path, "shape", &format!("({inner})"))),
        }
    }
    if !(2..=3).contains(&shape.len()) {
        return Err(header_error(path, "shape", &format!("({inner})")));
    }
    Ok(NpyHeader {
        descr,
        fortran_order,
        shape,
        data_offset: 0,
    })
}

fn parse_descr(s: &str) -> Option<Descr> {
    let (order, rest) = s.split_at_checked(1)?;
    let big_endian = match order {
        "<" | "|" | "=" => false,
        ">" => true,
        _ => return None,
    };
    let (kind, width) = rest.split_at_checked(1)?;
    let width: usize = width.parse().ok()?;
    let signed = match kind {
        "u" | "b" => false,
        "i" => true,
        _ => return None,
    };
    if kind == "b" && width != 1 {
        return None;
    }
    if ![1, 2, 4, 8].contains(&width) {
        return None;
    }
    Some(Descr {
        width,
        signed,
        big_endian: big_endian && width > 1,
    })
}

/// Reads an `.npy` array as a volume with edge `voxel_size_m`, converting
/// in blocks. Refuses a truncated file, trailing bytes, and values outside
/// `0..=65535` (named with their voxel).
pub fn read_npy(
    mut reader: impl Read,
    voxel_size_m: f64,
    path: &Path,
) -> Result<Volume, ImageError> {
    let h = read_npy_header(&mut reader, path)?;
    let dims = h.dims();
    let n = check_dims(dims, path)?;
    let w = h.descr.width;
    let expected = h.data_offset + (n * w) as u64;
    // Grown as elements arrive (a header that announces more than the file
    // holds costs no more memory than the file).
    let mut values: Vec<u16> = Vec::with_capacity(n.min(1 << 24));
    let mut block = vec![0u8; (1 << 20) * w];
    let mut done = 0usize;
    // Both orders store the fastest axis first, which is x: element k of
    // the file is voxel k of the volume.
    while done < n {
        let take = ((n - done) * w).min(block.len());
        let got = read_full(&mut reader, &mut block[..take], path)?;
        if got < take {
            return Err(ImageError::Truncated {
                path: path.to_path_buf(),
                what: "npy header and elements".into(),
                expected,
                found: h.data_offset + (done * w + got) as u64,
            });
        }
        for (j, c) in block[..take].chunks_exact(w).enumerate() {
            let k = done + j;
            let v = element(c, h.descr);
            if !(0..=65535).contains(&v) {
                return Err(ImageError::UnknownLabel {
                    path: path.to_path_buf(),
                    value: v.clamp(i64::MIN as i128, i64::MAX as i128) as i64,
                    voxel: super::volume::coords(dims, k),
                    declared: "labels must lie in 0..=65535".into(),
                });
            }
            values.push(v as u16);
        }
        done += take / w;
    }
    let mut extra = [0u8; 1];
    if read_full(&mut reader, &mut extra, path)? > 0 {
        return Err(ImageError::bad_field(
            path,
            "npy header shape",
            format!("{:?}", h.shape),
            format!("a shape that uses the whole file (it is longer than {expected} bytes)"),
        ));
    }
    Volume::new(dims, voxel_size_m, values, path)
}

fn element(c: &[u8], d: Descr) -> i128 {
    let mut b = [0u8; 8];
    if d.big_endian {
        for (i, &x) in c.iter().rev().enumerate() {
            b[i] = x;
        }
    } else {
        b[..c.len()].copy_from_slice(c);
    }
    let u = u64::from_le_bytes(b);
    if d.signed {
        let shift = 64 - 8 * c.len() as u32;
        (((u << shift) as i64) >> shift) as i128
    } else {
        u as i128
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_dict_parses_with_either_spacing() {
        let h = parse_header_text(
            "{'descr': '>i2', 'fortran_order': False, 'shape': (4, 3, 2), }   \n",
            Path::new("a.npy"),
        )
        .unwrap();
        assert_eq!(h.dims(), [2, 3, 4]);
        assert!(h.descr.big_endian && h.descr.signed && h.descr.width == 2);
        let h = parse_header_text(
            "{\"shape\":(5,6),\"fortran_order\":True,\"descr\":\"|u1\"}",
            Path::new("a.npy"),
        )
        .unwrap();
        assert_eq!(h.dims(), [5, 6, 1]);
    }

    #[test]
    fn bad_headers_name_the_field_and_value() {
        for (text, what, value) in [
            (
                "{'descr': '<f4', 'fortran_order': False, 'shape': (2, 2, 2), }",
                "descr",
                "<f4",
            ),
            (
                "{'descr': '<u2', 'fortran_order': Maybe, 'shape': (2, 2, 2), }",
                "fortran_order",
                "Maybe",
            ),
            (
                "{'descr': '<u2', 'fortran_order': False, 'shape': (2, 0, 2), }",
                "shape",
                "(2, 0, 2)",
            ),
            (
                "{'descr': '<u2', 'fortran_order': False, 'shape': (2, 2, 2, 2), }",
                "shape",
                "(2, 2, 2, 2)",
            ),
            (
                "{'descr': '<u2', 'fortran_order': False}",
                "shape",
                "missing",
            ),
        ] {
            let e = parse_header_text(text, Path::new("x.npy"))
                .unwrap_err()
                .to_string();
            assert!(
                e.contains("x.npy") && e.contains(what) && e.contains(value),
                "{e}"
            );
        }
    }

    #[test]
    fn signed_elements_sign_extend() {
        let d = Descr {
            width: 2,
            signed: true,
            big_endian: true,
        };
        assert_eq!(element(&[0xff, 0xfe], d), -2);
        let d = Descr {
            width: 4,
            signed: false,
            big_endian: false,
        };
        assert_eq!(element(&[1, 1, 0, 0], d), 257);
    }
}

//! Writers of the formats the readers take: `.npy` arrays, raw volumes
//! with their sidecar, and uncompressed TIFF stacks. Each returns bytes;
//! [`crate::io::image`] puts them on disk atomically.

use super::Volume;
use super::read_raw::{ByteOrder, RawSpec, SampleType};

/// The narrowest sample type that holds every value of `volume`.
pub fn narrowest(volume: &Volume) -> SampleType {
    if volume.values().iter().all(|&v| v <= 255) {
        SampleType::U8
    } else {
        SampleType::U16
    }
}

fn push_samples(out: &mut Vec<u8>, values: &[u16], t: SampleType, order: ByteOrder) {
    match (t, order) {
        (SampleType::U8, _) => out.extend(values.iter().map(|&v| v.min(255) as u8)),
        (SampleType::U16, ByteOrder::Little) => {
            for &v in values {
                out.extend_from_slice(&v.to_le_bytes());
            }
        }
        (SampleType::U16, ByteOrder::Big) => {
            for &v in values {
                out.extend_from_slice(&v.to_be_bytes());
            }
        }
    }
}

/// A version-1.0 `.npy` file of shape `(nz, ny, nx)` in C order, element
/// type `|u1` when every value fits in a byte, `<u2` otherwise.
pub fn npy_bytes(volume: &Volume) -> Vec<u8> {
    let [nx, ny, nz] = volume.dims();
    let t = narrowest(volume);
    let descr = match t {
        SampleType::U8 => "|u1",
        SampleType::U16 => "<u2",
    };
    let mut header =
        format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': ({nz}, {ny}, {nx}), }}");
    // Pad with spaces so that the data start on a multiple of 64 bytes,
    // the header ending with a newline (the format's rule).
    let unpadded = 10 + header.len() + 1;
    header.push_str(&" ".repeat(unpadded.next_multiple_of(64) - unpadded));
    header.push('\n');
    let mut out = Vec::with_capacity(10 + header.len() + volume.len() * t.bytes());
    out.extend_from_slice(b"\x93NUMPY\x01\x00");
    out.extend_from_slice(&(header.len() as u16).to_le_bytes());
    out.extend_from_slice(header.as_bytes());
    push_samples(&mut out, volume.values(), t, ByteOrder::Little);
    out
}

/// The samples of `volume` as laid out by `spec` (header bytes zero).
pub fn raw_bytes(volume: &Volume, spec: &RawSpec) -> Vec<u8> {
    let mut out = vec![0u8; spec.header_bytes as usize];
    push_samples(&mut out, volume.values(), spec.sample_type, spec.byte_order);
    out
}

/// An uncompressed TIFF stack of `volume` (one page per z slice, strips of
/// at most 64 KiB, as common writers make them), `sample_type` bits per
/// pixel, in byte order `order`.
pub fn tiff_bytes(volume: &Volume, sample_type: SampleType, order: ByteOrder) -> Vec<u8> {
    let row = volume.dims()[0] * sample_type.bytes();
    tiff_bytes_with_strips(volume, sample_type, order, ((1 << 16) / row).max(1))
}

/// As [`tiff_bytes`] with `rows_per_strip` rows in each strip (at least 1).
pub fn tiff_bytes_with_strips(
    volume: &Volume,
    sample_type: SampleType,
    order: ByteOrder,
    rows_per_strip: usize,
) -> Vec<u8> {
    let [nx, ny, nz] = volume.dims();
    let w = sample_type.bytes();
    let rows = rows_per_strip.clamp(1, ny);
    let n_strips = ny.div_ceil(rows);
    let page_bytes = nx * ny * w;
    let u16b = |v: u16| match order {
        ByteOrder::Little => v.to_le_bytes(),
        ByteOrder::Big => v.to_be_bytes(),
    };
    let u32b = |v: u32| match order {
        ByteOrder::Little => v.to_le_bytes(),
        ByteOrder::Big => v.to_be_bytes(),
    };
    let arrays = if n_strips > 1 { 8 * n_strips } else { 0 };
    let mut out = Vec::with_capacity(8 + nz * (page_bytes + arrays + 120));
    out.extend_from_slice(match order {
        ByteOrder::Little => b"II",
        ByteOrder::Big => b"MM",
    });
    out.extend_from_slice(&u16b(42));
    out.extend_from_slice(&u32b(8));
    for z in 0..nz {
        // Directory of 9 entries (2 + 9 × 12 + 4 bytes), the strip offset
        // and byte-count arrays when there is more than one strip, then the
        // strips.
        let ifd = out.len();
        let arrays_at = ifd + 2 + 9 * 12 + 4;
        let data_at = arrays_at + arrays;
        let next = if z + 1 < nz { data_at + page_bytes } else { 0 };
        let strip_rows = |s: usize| rows.min(ny - s * rows);
        out.extend_from_slice(&u16b(9));
        let mut entry = |tag: u16, kind: u16, count: u32, value: u32| {
            out.extend_from_slice(&u16b(tag));
            out.extend_from_slice(&u16b(kind));
            out.extend_from_slice(&u32b(count));
            if kind == 3 {
                out.extend_from_slice(&u16b(value as u16));
                out.extend_from_slice(&[0, 0]);
            } else {
                out.extend_from_slice(&u32b(value));
            }
        };
        let n = n_strips as u32;
        let (offsets, counts) = if n_strips > 1 {
            (arrays_at as u32, (arrays_at + 4 * n_strips) as u32)
        } else {
            (data_at as u32, page_bytes as u32)
        };
        entry(256, 4, 1, nx as u32);
        entry(257, 4, 1, ny as u32);
        entry(258, 3, 1, (8 * w) as u32);
        entry(259, 3, 1, 1);
        entry(262, 3, 1, 1);
        entry(273, 4, n, offsets);
        entry(277, 3, 1, 1);
        entry(278, 4, 1, rows as u32);
        entry(279, 4, n, counts);
        out.extend_from_slice(&u32b(next as u32));
        if n_strips > 1 {
            for s in 0..n_strips {
                out.extend_from_slice(&u32b((data_at + s * rows * nx * w) as u32));
            }
            for s in 0..n_strips {
                out.extend_from_slice(&u32b((strip_rows(s) * nx * w) as u32));
            }
        }
        let slice = &volume.values()[z * nx * ny..(z + 1) * nx * ny];
        push_samples(&mut out, slice, sample_type, order);
    }
    out
}

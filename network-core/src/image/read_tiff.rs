//! Multi-page TIFF stacks: one page per z slice.
//!
//! Read by hand from the TIFF 6.0 baseline layout (Adobe 1992): an 8-byte
//! header (`II` or `MM`, the number 42, the offset of the first image file
//! directory), then a chain of directories, one per page. Accepted pages:
//! greyscale, one sample per pixel, 8 or 16 bits, unsigned, uncompressed
//! (compression 1), stored in strips. Every page must have the width,
//! height and bit depth of the first. Anything else (tiles, compression,
//! colour, BigTIFF) is refused with the page and the field named.

use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

use super::ImageError;
use super::read_raw::{ByteOrder, SampleType, decode_samples, read_full};
use super::volume::{MAX_VOXELS, Volume, check_dims};

const TAG_WIDTH: u16 = 256;
const TAG_HEIGHT: u16 = 257;
const TAG_BITS: u16 = 258;
const TAG_COMPRESSION: u16 = 259;
const TAG_STRIP_OFFSETS: u16 = 273;
const TAG_SAMPLES_PER_PIXEL: u16 = 277;
const TAG_ROWS_PER_STRIP: u16 = 278;
const TAG_STRIP_BYTE_COUNTS: u16 = 279;
const TAG_TILE_WIDTH: u16 = 322;
const TAG_SAMPLE_FORMAT: u16 = 339;

/// The most pages a stack may have.
pub const MAX_PAGES: usize = 1 << 20;

struct Cursor<'a, R> {
    r: &'a mut R,
    path: &'a Path,
    order: ByteOrder,
}

impl<R: Read + Seek> Cursor<'_, R> {
    fn bytes<const N: usize>(&mut self, at: u64, what: &str) -> Result<[u8; N], ImageError> {
        self.r
            .seek(SeekFrom::Start(at))
            .map_err(|e| ImageError::Io {
                path: self.path.to_path_buf(),
                source: e,
            })?;
        let mut b = [0u8; N];
        let got = read_full(self.r, &mut b, self.path)?;
        if got < N {
            return Err(ImageError::Truncated {
                path: self.path.to_path_buf(),
                what: what.into(),
                expected: at + N as u64,
                found: at + got as u64,
            });
        }
        Ok(b)
    }

    fn u16_at(&mut self, at: u64, what: &str) -> Result<u16, ImageError> {
        let b = self.bytes::<2>(at, what)?;
        Ok(self.u16(b))
    }

    fn u32_at(&mut self, at: u64, what: &str) -> Result<u32, ImageError> {
        let b = self.bytes::<4>(at, what)?;
        Ok(self.u32(b))
    }

    fn u16(&self, b: [u8; 2]) -> u16 {
        match self.order {
            ByteOrder::Little => u16::from_le_bytes(b),
            ByteOrder::Big => u16::from_be_bytes(b),
        }
    }

    fn u32(&self, b: [u8; 4]) -> u32 {
        match self.order {
            ByteOrder::Little => u32::from_le_bytes(b),
            ByteOrder::Big => u32::from_be_bytes(b),
        }
    }
}

/// One directory entry: tag, field type, count and the 4-byte value field.
#[derive(Clone, Copy)]
struct Entry {
    tag: u16,
    kind: u16,
    count: u32,
    field: [u8; 4],
}

/// One page's layout.
struct Page {
    width: usize,
    height: usize,
    bits: u16,
    strips: Vec<(u64, u64)>,
}

fn values_of<R: Read + Seek>(
    c: &mut Cursor<'_, R>,
    e: &Entry,
    page: usize,
) -> Result<Vec<u64>, ImageError> {
    let size = match e.kind {
        3 => 2u64,
        4 => 4,
        1 => 1,
        k => {
            return Err(ImageError::bad_field(
                c.path,
                format!("page {page} tag {} field type", e.tag),
                k,
                "BYTE (1), SHORT (3) or LONG (4)",
            ));
        }
    };
    let count = u64::from(e.count);
    if count > 1 << 24 {
        return Err(ImageError::bad_field(
            c.path,
            format!("page {page} tag {} count", e.tag),
            count,
            "at most 2^24 values",
        ));
    }
    let inline = size * count <= 4;
    let base = if inline {
        None
    } else {
        Some(u64::from(c.u32(e.field)))
    };
    let mut out = Vec::with_capacity(count as usize);
    for k in 0..count {
        let v = match base {
            None => {
                let o = (k * size) as usize;
                match size {
                    1 => u64::from(e.field[o]),
                    2 => u64::from(c.u16([e.field[o], e.field[o + 1]])),
                    _ => u64::from(c.u32(e.field)),
                }
            }
            Some(b) => {
                let at = b + k * size;
                match size {
                    1 => u64::from(c.bytes::<1>(at, "tag values")?[0]),
                    2 => u64::from(c.u16_at(at, "tag values")?),
                    _ => u64::from(c.u32_at(at, "tag values")?),
                }
            }
        };
        out.push(v);
    }
    Ok(out)
}

fn read_page<R: Read + Seek>(
    c: &mut Cursor<'_, R>,
    ifd: u64,
    page: usize,
) -> Result<(Page, u64), ImageError> {
    let n = c.u16_at(ifd, "image file directory")?;
    let mut entries = Vec::with_capacity(n as usize);
    for k in 0..u64::from(n) {
        let at = ifd + 2 + 12 * k;
        let b = c.bytes::<12>(at, "image file directory entry")?;
        entries.push(Entry {
            tag: c.u16([b[0], b[1]]),
            kind: c.u16([b[2], b[3]]),
            count: c.u32([b[4], b[5], b[6], b[7]]),
            field: [b[8], b[9], b[10], b[11]],
        });
    }
    let next = u64::from(c.u32_at(ifd + 2 + 12 * u64::from(n), "next directory offset")?);
    let find = |tag: u16| entries.iter().find(|e| e.tag == tag).copied();
    let single = |c: &mut Cursor<'_, R>, tag: u16, name: &str| -> Result<Option<u64>, ImageError> {
        match find(tag) {
            None => Ok(None),
            Some(e) => {
                let v = values_of(c, &e, page)?;
                match v.first() {
                    Some(&x) => Ok(Some(x)),
                    None => Err(ImageError::bad_field(
                        c.path,
                        format!("page {page} {name}"),
                        "no value",
                        "one value",
                    )),
                }
            }
        }
    };
    let path = c.path;
    let required = |v: Option<u64>, name: &str| {
        v.ok_or_else(|| {
            ImageError::bad_field(path, format!("page {page} {name}"), "missing", "a value")
        })
    };
    let width = required(single(c, TAG_WIDTH, "ImageWidth")?, "ImageWidth")?;
    let height = required(single(c, TAG_HEIGHT, "ImageLength")?, "ImageLength")?;
    let bits = single(c, TAG_BITS, "BitsPerSample")?.unwrap_or(1);
    let compression = single(c, TAG_COMPRESSION, "Compression")?.unwrap_or(1);
    let spp = single(c, TAG_SAMPLES_PER_PIXEL, "SamplesPerPixel")?.unwrap_or(1);
    let format = single(c, TAG_SAMPLE_FORMAT, "SampleFormat")?.unwrap_or(1);
    let rows = single(c, TAG_ROWS_PER_STRIP, "RowsPerStrip")?.unwrap_or(u64::from(u32::MAX));
    let checks: [(&str, u64, bool, &str); 7] = [
        ("ImageWidth", width, width >= 1, ">= 1"),
        ("ImageLength", height, height >= 1, ">= 1"),
        ("BitsPerSample", bits, bits == 8 || bits == 16, "8 or 16"),
        (
            "Compression",
            compression,
            compression == 1,
            "1 (uncompressed)",
        ),
        ("SamplesPerPixel", spp, spp == 1, "1 (greyscale)"),
        ("SampleFormat", format, format == 1, "1 (unsigned integer)"),
        ("RowsPerStrip", rows, rows >= 1, ">= 1"),
    ];
    for (name, v, ok, expected) in checks {
        if !ok {
            return Err(ImageError::bad_field(
                c.path,
                format!("page {page} {name}"),
                v,
                expected,
            ));
        }
    }
    if find(TAG_TILE_WIDTH).is_some() {
        return Err(ImageError::bad_field(
            c.path,
            format!("page {page} TileWidth"),
            "present",
            "strips (tiled pages are not read)",
        ));
    }
    let offsets = match find(TAG_STRIP_OFFSETS) {
        Some(e) => values_of(c, &e, page)?,
        None => return Err(required(None, "StripOffsets").unwrap_err()),
    };
    let counts = match find(TAG_STRIP_BYTE_COUNTS) {
        Some(e) => values_of(c, &e, page)?,
        None => return Err(required(None, "StripByteCounts").unwrap_err()),
    };
    let n_strips = height.div_ceil(rows.min(height));
    if offsets.len() as u64 != n_strips || counts.len() as u64 != n_strips {
        return Err(ImageError::bad_field(
            c.path,
            format!("page {page} StripOffsets/StripByteCounts count"),
            format!("{}/{}", offsets.len(), counts.len()),
            format!("{n_strips} (ImageLength {height} / RowsPerStrip {rows})"),
        ));
    }
    // Refuse a page that could not belong to a volume before any size is
    // multiplied out.
    check_dims([width as usize, height as usize, 1], c.path).map_err(|_| {
        ImageError::bad_field(
            c.path,
            format!("page {page} ImageWidth × ImageLength"),
            format!("{width} × {height}"),
            "at most 2^32 - 1 pixels",
        )
    })?;
    let row_bytes = width * bits / 8;
    let mut strips = Vec::with_capacity(offsets.len());
    for (s, (&o, &cnt)) in offsets.iter().zip(&counts).enumerate() {
        let strip_rows = rows.min(height - s as u64 * rows.min(height));
        let need = strip_rows * row_bytes;
        if cnt < need {
            return Err(ImageError::bad_field(
                c.path,
                format!("page {page} StripByteCounts[{s}]"),
                cnt,
                format!(">= {need} ({strip_rows} rows of {row_bytes} bytes)"),
            ));
        }
        strips.push((o, need));
    }
    Ok((
        Page {
            width: width as usize,
            height: height as usize,
            bits: bits as u16,
            strips,
        },
        next,
    ))
}

/// Reads a TIFF stack as a volume with edge `voxel_size_m`; each page is one
/// z slice, in file order.
pub fn read_tiff<R: Read + Seek>(
    mut reader: R,
    voxel_size_m: f64,
    path: &Path,
) -> Result<Volume, ImageError> {
    let mut head = [0u8; 8];
    let got = read_full(&mut reader, &mut head, path)?;
    if got < 8 {
        return Err(ImageError::Truncated {
            path: path.to_path_buf(),
            what: "TIFF header".into(),
            expected: 8,
            found: got as u64,
        });
    }
    let order = match &head[..2] {
        b"II" => ByteOrder::Little,
        b"MM" => ByteOrder::Big,
        other => {
            return Err(ImageError::bad_field(
                path,
                "TIFF byte-order mark",
                format!("{other:?}"),
                "\"II\" or \"MM\"",
            ));
        }
    };
    let mut c = Cursor {
        r: &mut reader,
        path,
        order,
    };
    let magic = c.u16([head[2], head[3]]);
    if magic != 42 {
        return Err(ImageError::bad_field(
            path,
            "TIFF version",
            magic,
            "42 (classic TIFF; BigTIFF is not read)",
        ));
    }
    let mut ifd = u64::from(c.u32([head[4], head[5], head[6], head[7]]));
    let mut values: Vec<u16> = Vec::new();
    let mut first: Option<(usize, usize, u16)> = None;
    let mut seen = std::collections::HashSet::new();
    let mut n_pages = 0usize;
    let mut strip = Vec::new();
    while ifd != 0 {
        if !seen.insert(ifd) || n_pages >= MAX_PAGES {
            return Err(ImageError::bad_field(
                path,
                format!("page {n_pages} directory offset"),
                ifd,
                format!("a chain of at most {MAX_PAGES} pages without loops"),
            ));
        }
        let (page, next) = read_page(&mut c, ifd, n_pages)?;
        let shape = (page.width, page.height, page.bits);
        match first {
            None => first = Some(shape),
            Some(f) if f != shape => {
                return Err(ImageError::bad_field(
                    path,
                    format!("page {n_pages} width × height × bits"),
                    format!("{} × {} × {}", page.width, page.height, page.bits),
                    format!("the first page's {} × {} × {}", f.0, f.1, f.2),
                ));
            }
            Some(_) => {}
        }
        let sample = if page.bits == 8 {
            SampleType::U8
        } else {
            SampleType::U16
        };
        if (values.len() + page.width * page.height) as u64 > MAX_VOXELS as u64 {
            return Err(ImageError::bad_field(
                path,
                "pages",
                n_pages + 1,
                format!("at most {MAX_VOXELS} voxels in all"),
            ));
        }
        for &(offset, len) in &page.strips {
            c.r.seek(SeekFrom::Start(offset))
                .map_err(|e| ImageError::Io {
                    path: path.to_path_buf(),
                    source: e,
                })?;
            // Read in blocks, so a header that announces more than the file
            // holds costs no more memory than the file.
            let mut done = 0u64;
            while done < len {
                let take = (len - done).min(1 << 20) as usize;
                strip.resize(take, 0);
                let got = read_full(c.r, &mut strip, path)?;
                if got < take {
                    return Err(ImageError::Truncated {
                        path: path.to_path_buf(),
                        what: format!("page {n_pages} strip data"),
                        expected: offset + len,
                        found: offset + done + got as u64,
                    });
                }
                decode_samples(&strip, sample, order, &mut values);
                done += take as u64;
            }
        }
        n_pages += 1;
        ifd = next;
    }
    let Some((w, h, _)) = first else {
        return Err(ImageError::bad_field(path, "pages", 0, "at least one page"));
    };
    let dims = [w, h, n_pages];
    check_dims(dims, path)?;
    Volume::new(dims, voxel_size_m, values, path)
}

//! From a segmented image to a network: geometry checks against analytic
//! shapes, exact volume bookkeeping, readers' round trips and refusals, and
//! thread-count independence.

use std::f64::consts::PI;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};

use network_core::flow::{PermOptions, permeability};
use network_core::image::extract::{ExtractOptions, extract};
use network_core::image::read_raw::{ByteOrder, SampleType};
use network_core::image::synth::{GrainPackSpec, grain_pack};
use network_core::image::{Labels, Volume, encode};
use network_core::io::image::{ImageOptions, read_image, sidecar_path, write_npy, write_raw};
use network_core::{Axis, Boundary};
use proptest::prelude::*;

static COUNTER: AtomicUsize = AtomicUsize::new(0);

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "ganglion-image-test-{}-{name}-{}",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::Relaxed)
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A binary image (solid 0, pore 1) from a predicate on voxel centres
/// `(x + ½, y + ½, z + ½)` in voxel units.
fn image(dims: [usize; 3], pore: impl Fn(f64, f64, f64) -> bool) -> Volume {
    let mut values = Vec::with_capacity(dims[0] * dims[1] * dims[2]);
    for z in 0..dims[2] {
        for y in 0..dims[1] {
            for x in 0..dims[0] {
                let p = pore(x as f64 + 0.5, y as f64 + 0.5, z as f64 + 0.5);
                values.push(u16::from(p));
            }
        }
    }
    Volume::new(dims, 1e-6, values, Path::new("test image")).unwrap()
}

fn opts(axis: Axis) -> ExtractOptions {
    ExtractOptions {
        flow_axis: axis,
        ..ExtractOptions::default()
    }
}

const TUBE_R: f64 = 6.0;
const TUBE_CENTRES: [(f64, f64); 4] = [(10.0, 10.0), (30.0, 10.0), (10.0, 30.0), (30.0, 30.0)];

fn tubes() -> Volume {
    image([40, 40, 60], |x, y, _| {
        TUBE_CENTRES
            .iter()
            .any(|&(cx, cy)| (x - cx).powi(2) + (y - cy).powi(2) <= TUBE_R * TUBE_R)
    })
}

#[test]
fn pore_volumes_add_up_to_the_pore_voxels_exactly() {
    // Every pore-space voxel joins exactly one region and every region is
    // one pore (the extraction's bookkeeping): the voxel counts must agree
    // as integers, and the volumes to the rounding of one sum of
    // n_pores terms (n ε relative, Higham 2002, Accuracy and Stability of
    // Numerical Algorithms, §4.2).
    let spec = GrainPackSpec {
        dims: [48, 40, 44],
        voxel_size_m: 2.5e-6,
        porosity: 0.3,
        radius_min: 3.0,
        radius_max: 6.0,
        seed: 3,
    };
    let (vol, _) = grain_pack(&spec, Path::new("spec")).unwrap();
    let n_pore = vol.values().iter().filter(|&&v| v == 1).count() as u64;
    let ex = extract(&vol, &Labels::default(), &opts(Axis::X), Path::new("pack")).unwrap();
    assert_eq!(ex.summary.n_pore_voxels, n_pore);
    let in_regions = ex.regions.labels.iter().filter(|&&l| l > 0).count() as u64;
    assert_eq!(in_regions, n_pore);
    let net = &ex.network;
    let total: f64 = net.pores().volume.iter().sum();
    let exact = n_pore as f64 * 2.5e-6f64.powi(3);
    let n = net.n_pores() as f64;
    assert!(
        (total - exact).abs() <= n * f64::EPSILON * exact,
        "{total} vs {exact}"
    );
    assert!(net.throats().volume.iter().all(|&v| v == 0.0));
    // Porosity of the network = image porosity (bulk volume is the image's).
    let phi = total / net.info().bulk_volume_m3;
    assert!((phi - ex.summary.porosity).abs() < 1e-12);
}

#[test]
fn parallel_tubes_give_throats_of_the_tube_radius_and_poiseuille_permeability() {
    // Four straight cylinders of radius R = 6 voxels along z through a
    // 40 × 40 × 60 image. Each tube is split along its axis into a chain
    // of pores; every window between two of them is a full cross-section of
    // the tube, whose inscribed radius is R.
    let vol = tubes();
    let ex = extract(&vol, &Labels::default(), &opts(Axis::Z), Path::new("tubes")).unwrap();
    let net = &ex.network;
    let a = 1e-6;
    assert!(net.n_throats() > 0);
    for t in 0..net.n_throats() {
        let r = net.throats().radius[t] / a;
        assert!(
            (r - TUBE_R).abs() <= 1.0,
            "throat {t}: radius {r} voxels vs R = {TUBE_R}"
        );
    }
    let n_in = net
        .pores()
        .boundary
        .iter()
        .filter(|&&b| b == Boundary::Inlet)
        .count();
    assert_eq!(n_in, 4, "one inlet pore per tube");
    // Hagen–Poiseuille (Sutera & Skalak 1993, Annu. Rev. Fluid Mech.
    // 25:1, for the history): a tube of radius r carries
    // Q = π r⁴ Δp / (8 μ L); N tubes in a sample of cross-section A give
    // K = μ Q_total L / (A Δp) = N π r⁴ / (8 A).
    // Discretisation error: the network gives every element of a tube's
    // chain a radius r with |r − R| ≤ 1 voxel (checked above for throats;
    // pores of a straight tube have the same inscribed radius) and the
    // conductance of a circular section, π r⁴/(8μ) per unit length; the
    // series sum over a chain whose lengths add up to the sample length L
    // then gives K between N π (R − 1)⁴ / (8A) and N π (R + 1)⁴ / (8A).
    let k = permeability(net, Axis::Z, &PermOptions::default())
        .unwrap()
        .permeability_m2;
    let area = (40.0 * a) * (40.0 * a);
    let k_hp = |r: f64| 4.0 * PI * (r * a).powi(4) / (8.0 * area);
    assert!(
        k > k_hp(TUBE_R - 1.0) && k < k_hp(TUBE_R + 1.0),
        "K = {k:e}, Poiseuille K(R) = {:e}, bounds {:e}..{:e}",
        k_hp(TUBE_R),
        k_hp(TUBE_R - 1.0),
        k_hp(TUBE_R + 1.0)
    );
}

const SC_R: f64 = 8.0;
const SC_CELLS: usize = 4;

/// Spheres of radius R centred on a simple cubic lattice of spacing 2R
/// (touching neighbours), 4 cells along each axis.
fn simple_cubic() -> Volume {
    let n = (2.0 * SC_R) as usize * SC_CELLS;
    let s = 2.0 * SC_R;
    image([n, n, n], |x, y, z| {
        let d = |c: f64| {
            let m = (c / s).round() * s;
            (c - m).powi(2)
        };
        d(x) + d(y) + d(z) > SC_R * SC_R
    })
}

#[test]
fn simple_cubic_sphere_pack_porosity_pores_and_windows() {
    let vol = simple_cubic();
    let ex = extract(&vol, &Labels::default(), &opts(Axis::X), Path::new("sc")).unwrap();
    // Porosity: a unit cell (2R)³ holds eight eighth-spheres, one sphere:
    // φ = 1 − (4/3)π R³ / (2R)³ = 1 − π/6 (geometry). Voxelisation: a voxel
    // whose centre lies in a ball of radius R lies inside the ball of
    // radius R + √3/2, and every voxel inside the ball of radius R − √3/2
    // has its centre in the ball; so the solid fraction lies between
    // (π/6)(1 − √3/(2R))³ and (π/6)(1 + √3/(2R))³ (geometry). For R = 8 that
    // allows 0.286 ≤ φ ≤ 0.629; the observed error is far smaller, so we
    // also check the half-voxel shell estimate: the count error is at most
    // the shell volume 4πR² × ½ over the cell volume, 0.049 (geometry, a
    // bound on the mean, not a rigorous one).
    let exact = 1.0 - PI / 6.0;
    let phi = ex.summary.porosity;
    let shell = 4.0 * PI * SC_R * SC_R * 0.5 / (2.0 * SC_R).powi(3);
    assert!((phi - exact).abs() < shell, "φ = {phi}, 1 − π/6 = {exact}");

    // One pore per unit cell away from the faces: the cells (i, j, k) with
    // i, j, k in 1..=2 hold exactly one pore centre each.
    let net = &ex.network;
    let s = 2.0 * SC_R * 1e-6;
    let mut per_cell = std::collections::BTreeMap::new();
    for p in 0..net.n_pores() {
        let c = net.pores().centre(p);
        let cell: Vec<usize> = c.iter().map(|&v| (v / s).floor() as usize).collect();
        *per_cell.entry(cell).or_insert(0) += 1;
    }
    for i in 1..SC_CELLS - 1 {
        for j in 1..SC_CELLS - 1 {
            for k in 1..SC_CELLS - 1 {
                assert_eq!(per_cell.get(&vec![i, j, k]), Some(&1), "cell {i} {j} {k}");
            }
        }
    }

    // Windows: a face of the cell is a square of side 2R with a sphere
    // centre at each corner; its centre lies √2 R from each corner, so the
    // largest circle in the window has radius (√2 − 1) R (geometry). Throats
    // between two interior pores must be within one voxel of it.
    let window = (2f64.sqrt() - 1.0) * SC_R;
    let interior = |p: usize| {
        net.pores()
            .centre(p)
            .iter()
            .all(|&v| v > s && v < (SC_CELLS - 1) as f64 * s)
    };
    let mut n_checked = 0;
    for t in 0..net.n_throats() {
        let [a, b] = net.throats().pores[t];
        if interior(a as usize) && interior(b as usize) {
            let r = net.throats().radius[t] / 1e-6;
            assert!((r - window).abs() <= 1.0, "throat {t}: {r} vs {window}");
            n_checked += 1;
        }
    }
    // 8 interior cells in a 2 × 2 × 2 block share 12 faces (geometry).
    assert_eq!(n_checked, 12);

    // Permeability against Stokes flow through the periodic array (Zick &
    // Homsy 1982, J. Fluid Mech. 115:13; Sangani & Acrivos 1982, Int. J.
    // Multiphase Flow 8:343). They give the drag on each sphere as
    // F = 6πμRUK with U the superficial velocity and, for the touching
    // simple cubic array (solid fraction c = π/6), K ≈ 42.1 (from memory).
    // Force balance of a slab: n F = Δp/L with n = c / (4πR³/3) spheres per
    // unit volume, and Darcy Δp/L = μU/k, so k = 2R²/(9 c K) ≈ 0.0101 R².
    // A pore network replaces the continuous flow field by conduits of
    // uniform section and is not expected to agree better than a factor of
    // two (common practice); the observed ratio is stated in the message.
    let k = permeability(net, Axis::X, &PermOptions::default())
        .unwrap()
        .permeability_m2;
    let r = SC_R * 1e-6;
    let k_stokes = 2.0 * r * r / (9.0 * (PI / 6.0) * 42.1);
    let ratio = k / k_stokes;
    assert!(
        ratio > 0.5 && ratio < 2.0,
        "k = {k:e}, Stokes {k_stokes:e}, ratio {ratio}"
    );
}

#[test]
fn extraction_has_the_same_bits_with_one_and_two_threads() {
    let spec = GrainPackSpec {
        dims: [40, 36, 32],
        voxel_size_m: 3e-6,
        porosity: 0.32,
        radius_min: 2.5,
        radius_max: 5.0,
        seed: 11,
    };
    let (vol, _) = grain_pack(&spec, Path::new("spec")).unwrap();
    let run = |t: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(t)
            .build()
            .unwrap()
            .install(|| extract(&vol, &Labels::default(), &opts(Axis::Y), Path::new("p")).unwrap())
    };
    let (one, two) = (run(1), run(2));
    assert_eq!(one.regions, two.regions);
    assert_eq!(one.network, two.network);
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(
        bits(&one.network.pores().radius),
        bits(&two.network.pores().radius)
    );
}

fn sample_volume() -> Volume {
    let values: Vec<u16> = (0..5 * 4 * 3).map(|i| (i * 7 % 3) as u16).collect();
    Volume::new([5, 4, 3], 4e-6, values, Path::new("v")).unwrap()
}

fn three_labels() -> ImageOptions {
    ImageOptions {
        voxel_size_m: Some(4e-6),
        water_label: Some(2),
        ..ImageOptions::default()
    }
}

#[test]
fn every_format_round_trips() {
    let dir = scratch("round");
    let vol = sample_volume();
    let npy = dir.join("a.npy");
    write_npy(&vol, &npy).unwrap();
    let back = read_image(&npy, &three_labels()).unwrap();
    assert_eq!(back.volume, vol);
    for (t, order) in [
        (SampleType::U8, ByteOrder::Little),
        (SampleType::U16, ByteOrder::Little),
        (SampleType::U16, ByteOrder::Big),
    ] {
        let tif = dir.join(format!("a-{}-{}.tif", t.as_str(), order.as_str()));
        std::fs::write(&tif, encode::tiff_bytes(&vol, t, order)).unwrap();
        assert_eq!(read_image(&tif, &three_labels()).unwrap().volume, vol);
    }
    // Several strips per page: the 4 rows of a slice in strips of 1 row
    // (4 strips), 2 rows (2 strips) and 3 rows (a full strip and a last
    // one of 1 row), read through the offset and byte-count arrays.
    for rows in [1, 2, 3] {
        let tif = dir.join(format!("strips-{rows}.tif"));
        std::fs::write(
            &tif,
            encode::tiff_bytes_with_strips(&vol, SampleType::U16, ByteOrder::Big, rows),
        )
        .unwrap();
        assert_eq!(
            read_image(&tif, &three_labels()).unwrap().volume,
            vol,
            "{rows} rows"
        );
    }
    let raw = dir.join("a.raw");
    let labels = Labels {
        water: Some(2),
        ..Labels::default()
    };
    write_raw(&vol, labels, &raw).unwrap();
    let back = read_image(&raw, &ImageOptions::default()).unwrap();
    assert_eq!(back.volume, vol);
    assert_eq!(back.labels, labels);
    // The same bytes as a Fortran-order array of shape (nx, ny, nz): x is
    // again the fastest axis, so the volume is the same (the format's
    // definition of the two orders).
    let c_order = encode::npy_bytes(&vol);
    let text = String::from_utf8(c_order[10..c_order.len() - vol.len()].to_vec()).unwrap();
    let f_text = text
        .replace("'fortran_order': False", "'fortran_order': True")
        .replace("(3, 4, 5)", "(5, 4, 3)");
    assert_ne!(text, f_text);
    let mut f_bytes = c_order[..10].to_vec();
    f_bytes.extend_from_slice(f_text.as_bytes());
    f_bytes.extend_from_slice(&c_order[c_order.len() - vol.len()..]);
    f_bytes[8..10].copy_from_slice(&(f_text.len() as u16).to_le_bytes());
    let fortran = dir.join("f.npy");
    std::fs::write(&fortran, &f_bytes).unwrap();
    assert_eq!(read_image(&fortran, &three_labels()).unwrap().volume, vol);
    // 16-bit values survive in .npy (written as <u2).
    let wide = Volume::new([2, 1, 1], 1e-6, vec![0, 40000], Path::new("w")).unwrap();
    write_npy(&wide, &npy).unwrap();
    let opts = ImageOptions {
        voxel_size_m: Some(1e-6),
        pore_label: Some(40000),
        ..ImageOptions::default()
    };
    assert_eq!(read_image(&npy, &opts).unwrap().volume, wide);
}

fn error_of(path: &Path, opts: &ImageOptions) -> String {
    let loaded = read_image(path, opts);
    match loaded {
        Err(e) => e.to_string(),
        Ok(img) => match img.labels.phases(&img.volume, path) {
            Err(e) => e.to_string(),
            Ok(_) => String::from("accepted"),
        },
    }
}

#[test]
fn malformed_images_give_located_errors() {
    let dir = scratch("bad");
    let vol = sample_volume();
    // Truncated .npy: the message names the file and both byte counts.
    let npy = dir.join("t.npy");
    let bytes = encode::npy_bytes(&vol);
    std::fs::write(&npy, &bytes[..bytes.len() - 3]).unwrap();
    let e = error_of(&npy, &three_labels());
    assert!(
        e.contains("t.npy") && e.contains("truncated") && e.contains(&bytes.len().to_string()),
        "{e}"
    );
    // Bad .npy header.
    let at = bytes.windows(5).position(|w| w == b"'|u1'").unwrap();
    let mut bad = bytes.clone();
    bad[at..at + 5].copy_from_slice(b"'<f8'");
    std::fs::write(&npy, &bad).unwrap();
    let e = error_of(&npy, &three_labels());
    assert!(e.contains("descr") && e.contains("<f8"), "{e}");
    // Truncated TIFF.
    let tif = dir.join("t.tif");
    let bytes = encode::tiff_bytes(&vol, SampleType::U8, ByteOrder::Little);
    std::fs::write(&tif, &bytes[..bytes.len() - 5]).unwrap();
    let e = error_of(&tif, &three_labels());
    assert!(e.contains("t.tif") && e.contains("page 2"), "{e}");
    // TIFF without a voxel size.
    std::fs::write(&tif, &bytes).unwrap();
    let e = error_of(&tif, &ImageOptions::default());
    assert!(
        e.contains("voxel_size_m") && e.contains("--voxel-size-m"),
        "{e}"
    );
    // Raw whose sidecar has wrong dimensions (file longer than announced).
    let raw = dir.join("r.raw");
    write_raw(
        &vol,
        Labels {
            water: Some(2),
            ..Labels::default()
        },
        &raw,
    )
    .unwrap();
    let side = sidecar_path(&raw);
    let text = std::fs::read_to_string(&side)
        .unwrap()
        .replace("dims = [5, 4, 3]", "dims = [5, 4, 2]");
    std::fs::write(&side, text).unwrap();
    let e = error_of(&raw, &ImageOptions::default());
    assert!(
        e.contains("r.raw") && e.contains("dims") && e.contains("[5, 4, 2]"),
        "{e}"
    );
    // Raw without a sidecar.
    std::fs::remove_file(&side).unwrap();
    let e = error_of(&raw, &ImageOptions::default());
    assert!(e.contains("sidecar") && e.contains("r.raw.toml"), "{e}");
    // A negative .npy element is named with its value and voxel.
    let neg = Volume::new([3, 1, 1], 1e-6, vec![0, 1, 1], Path::new("n")).unwrap();
    let mut bytes = encode::npy_bytes(&neg);
    let at = bytes.windows(5).position(|w| w == b"'|u1'").unwrap();
    bytes[at..at + 5].copy_from_slice(b"'|i1'");
    let n = bytes.len();
    bytes[n - 1] = 0xfe;
    std::fs::write(&npy, &bytes).unwrap();
    let e = error_of(&npy, &three_labels());
    assert!(e.contains("label -2") && e.contains("x=2, y=0, z=0"), "{e}");
    // A TIFF page announcing far more pixels than the file holds is refused
    // as truncated without reserving memory for them.
    let big = Volume::new([2, 2, 1], 1e-6, vec![0; 4], Path::new("b")).unwrap();
    let mut bytes = encode::tiff_bytes(&big, SampleType::U8, ByteOrder::Little);
    // Entries start at byte 10; ImageLength (the second) has its value at
    // 10 + 12 + 8, RowsPerStrip (the eighth) at 10 + 7·12 + 8, the strip
    // byte count (the ninth) at 10 + 8·12 + 8.
    bytes[30..34].copy_from_slice(&60_000u32.to_le_bytes());
    bytes[102..106].copy_from_slice(&60_000u32.to_le_bytes());
    bytes[114..118].copy_from_slice(&120_000u32.to_le_bytes());
    std::fs::write(&tif, &bytes).unwrap();
    let e = error_of(&tif, &three_labels());
    assert!(e.contains("truncated") && e.contains("page 0 strip"), "{e}");
    // Unknown label: value 2 is not declared without water_label.
    let bytes = encode::tiff_bytes(&vol, SampleType::U8, ByteOrder::Little);
    std::fs::write(&tif, &bytes).unwrap();
    let e = error_of(
        &tif,
        &ImageOptions {
            voxel_size_m: Some(1e-6),
            ..ImageOptions::default()
        },
    );
    assert!(
        e.contains("t.tif") && e.contains("label 2") && e.contains("x=2, y=0, z=0"),
        "{e}"
    );
}

/// Cases of the image fuzz properties: `release` in an optimised build (64
/// in a debug one), or `GANGLION_FUZZ_CASES` for long runs (the command in
/// `fuzz.rs` runs these too).
fn fuzz_cases(release: u32) -> u32 {
    std::env::var("GANGLION_FUZZ_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(if cfg!(debug_assertions) { 64 } else { release })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(fuzz_cases(256)))]

    /// Any truncation or byte change of a valid file is either read or
    /// refused with an error; the readers never panic (the property).
    #[test]
    fn never_panics_on_damaged_image_files(cut in 0usize..400, pos in 0usize..400, byte in any::<u8>(), which in 0usize..3) {
        let dir = std::env::temp_dir().join(format!("ganglion-image-prop-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let vol = sample_volume();
        let (name, mut bytes) = match which {
            0 => ("p.npy", encode::npy_bytes(&vol)),
            1 => ("p.tif", encode::tiff_bytes(&vol, SampleType::U16, ByteOrder::Big)),
            _ => ("p.raw", encode::raw_bytes(&vol, &network_core::image::read_raw::RawSpec {
                dims: [5, 4, 3], voxel_size_m: 1e-6, sample_type: SampleType::U8,
                byte_order: ByteOrder::Little, header_bytes: 0, labels: Labels::default() })),
        };
        if pos < bytes.len() { bytes[pos] = byte; }
        bytes.truncate(bytes.len().saturating_sub(cut % (bytes.len() + 1)));
        let path = dir.join(format!("{}-{name}", std::thread::current().name().unwrap_or("t").replace("::", "-")));
        std::fs::write(&path, &bytes).unwrap();
        if which == 2 {
            std::fs::write(sidecar_path(&path), "dims = [5, 4, 3]\nvoxel_size_m = 1e-6\n").unwrap();
        }
        let _ = error_of(&path, &three_labels());
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(fuzz_cases(512)))]

    /// Any sidecar text or `.npy` header text is parsed or refused; the
    /// parsers never panic (the property). Texts are built from the keys'
    /// own vocabulary so that many reach the value checks.
    #[test]
    fn never_panics_on_sidecar_and_npy_header_texts(
        words in proptest::collection::vec(prop_oneof![
            Just("dims"), Just("voxel_size_m"), Just("sample_type"), Just("pore_label"),
            Just("oil_label"), Just("header_bytes"), Just("byte_order"), Just("="),
            Just("["), Just("]"), Just(","), Just("\n"), Just("-1"), Just("0"),
            Just("70000"), Just("2e-6"), Just("\"u16\""), Just("\"big\""), Just("'descr'"),
            Just("'<u2'"), Just(":"), Just("'shape'"), Just("("), Just(")"),
            Just("'fortran_order'"), Just("True"), Just("{"), Just("}"), Just("'|b2'"),
        ], 0..40)
    ) {
        let text = words.join(" ");
        let _ = network_core::image::read_raw::parse_sidecar(&text, Path::new("s.toml"));
        let _ = network_core::image::read_npy::parse_header_text(&text, Path::new("h.npy"));
    }
}

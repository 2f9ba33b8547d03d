//! The incremental saturation bookkeeping equals a full recomputation at
//! every recorded point (identity of two ways of summing the same volumes).

use network_core::engine::{Engine, Setup};
use network_core::generate::{LatticeSpec, generate};
use network_core::geometry::Geometry;
use network_core::params::ImbibitionFaces;
use network_core::progress::Silent;
use network_core::run::process::run_process_observed;
use network_core::study::{ProcessKind, StopAt, Study};
use network_core::wettability::ContactAngles;

fn check(
    study_extra: &str,
    stops: &[(ProcessKind, StopAt)],
    faces: ImbibitionFaces,
    snap_off: bool,
) {
    let spec = LatticeSpec {
        nx: 10,
        ny: 10,
        nz: 10,
        clay_fraction: 0.03,
        seed: 6,
        ..LatticeSpec::default()
    };
    let net = generate(&spec, &Silent).unwrap();
    let study = Study::parse(&format!(
        "network = \"x\"\nseed = 2\n[wettability]\nreceding_contact_angle_deg = [0.0, 20.0]\n{study_extra}\n[[process]]\nkind = \"drainage\"\nuntil_pc_pa = 1.0\n"
    ))
    .unwrap();
    let geom = Geometry::new(&net, 2);
    let mut setup = Setup {
        sigma: 0.03,
        imbibition_faces: faces,
        seed: 2,
        ..Setup::of_study(&net, &geom, &study)
    };
    setup.mechanisms.snap_off = snap_off;
    let angles = ContactAngles::intrinsic(&study.wettability, net.n_elements(), 2);
    let mut eng = Engine::new(setup, angles);
    let mut checked = 0usize;
    let mut fast_points = 0usize;
    for (i, &(kind, stop)) in stops.iter().enumerate() {
        if i == 1 {
            eng.alter_wettability(&study.wettability);
        }
        run_process_observed(&mut eng, kind, stop, 25, &Silent, &mut |p, e| {
            let full = e.saturation_full();
            let fast = e.saturation();
            for (name, a, b) in [
                ("sw", fast.sw, full.sw),
                ("sn_trapped", fast.sn_trapped, full.sn_trapped),
                ("sw_trapped", fast.sw_trapped, full.sw_trapped),
                ("sw_corners", fast.sw_corners, full.sw_corners),
                ("sn_layers", fast.sn_layers, full.sn_layers),
            ] {
                assert!(
                    (a - b).abs() < 1e-11,
                    "process {i} {kind:?} Pc {}: {name} fast {a} full {b}",
                    p.pc_pa
                );
            }
            assert!((p.saturation.sw - full.sw).abs() < 1e-11);
            checked += 1;
            if e.explicit_elements() * 4 < e.state().len() {
                fast_points += 1;
            }
        });
    }
    assert!(checked > 50, "only {checked} points");
    // Most points must come from the running sums, not element by element.
    assert!(
        fast_points * 2 > checked,
        "{fast_points} of {checked} points used the running sums"
    );
}

#[test]
fn bookkeeping_matches_full_recomputation_in_a_water_wet_cycle() {
    check(
        "advancing_contact_angle_deg = [30.0, 60.0]",
        &[
            (ProcessKind::Drainage, StopAt::Pc(1e5)),
            (ProcessKind::Imbibition, StopAt::Pc(-1e5)),
            (ProcessKind::Drainage, StopAt::Pc(1e5)),
        ],
        ImbibitionFaces::Outlet,
        true,
    );
}

#[test]
fn bookkeeping_matches_full_recomputation_in_a_mixed_wet_cycle_with_layers() {
    check(
        "advancing_contact_angle_deg = [20.0, 70.0]\noil_wet_fraction = 0.5\noil_wet_advancing_contact_angle_deg = [140.0, 175.0]",
        &[
            (ProcessKind::Drainage, StopAt::Sw(0.3)),
            (ProcessKind::Imbibition, StopAt::Pc(-3e4)),
            (ProcessKind::Drainage, StopAt::Sw(0.2)),
            (ProcessKind::Imbibition, StopAt::Sw(0.6)),
        ],
        ImbibitionFaces::Both,
        true,
    );
}

#[test]
fn bookkeeping_matches_full_recomputation_without_snap_off() {
    check(
        "advancing_contact_angle_deg = [10.0, 30.0]",
        &[
            (ProcessKind::Drainage, StopAt::Pc(5e4)),
            (ProcessKind::Imbibition, StopAt::Pc(-5e4)),
        ],
        ImbibitionFaces::Outlet,
        false,
    );
}

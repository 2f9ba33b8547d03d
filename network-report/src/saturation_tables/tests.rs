use super::*;

fn is_non_decreasing(v: &[f64]) -> bool {
    v.windows(2).all(|w| w[0] <= w[1])
}

fn is_non_increasing(v: &[f64]) -> bool {
    v.windows(2).all(|w| w[0] >= w[1])
}

/// A drainage curve (Sw falling from 1 to 0.25) with deliberate defects:
/// a dip in krw, a bump in krn, a Pc back-step, an Sw reversal, a repeated
/// Sw, and a round-off negative krw.
fn noisy_drainage() -> (Vec<f64>, Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut sw = Vec::new();
    let mut krw = Vec::new();
    let mut krn = Vec::new();
    let mut pc = Vec::new();
    for i in 0..=15 {
        let s = 1.0 - 0.05 * i as f64;
        let swn = ((s - 0.25) / 0.75).clamp(0.0, 1.0);
        sw.push(s);
        krw.push(swn.powi(3));
        krn.push(0.8 * (1.0 - swn).powi(2));
        pc.push(2000.0 * (swn.max(0.02)).powf(-0.5));
    }
    krw[4] = krw[5] - 0.01; // dip below the next (lower-Sw) value
    krn[7] = krn[6] - 0.02; // krn falls where it should rise with falling Sw
    pc[9] = pc[8] - 50.0; // Pc back-step
    sw.swap(10, 11); // Sw reversal along drainage
    sw[13] = sw[12]; // repeated Sw
    krw[15] = -1e-15; // round-off negative at the lowest Sw
    (sw, krw, krn, pc)
}

#[test]
fn pav_matches_hand_computed_examples() {
    // Pool-adjacent-violators (Ayer et al. 1955), worked by hand:
    // [1, 3, 2, 4, 3, 5] → pool (3, 2) → 2.5 and (4, 3) → 3.5.
    assert_eq!(
        isotonic_non_decreasing(&[1.0, 3.0, 2.0, 4.0, 3.0, 5.0], &[]),
        vec![1.0, 2.5, 2.5, 3.5, 3.5, 5.0]
    );
    // Cascading pool: [1, 5, 4, 3, 6] → (5, 4) = 4.5 > 3 → (5, 4, 3) = 4.
    assert_eq!(
        isotonic_non_decreasing(&[1.0, 5.0, 4.0, 3.0, 6.0], &[1.0; 5]),
        vec![1.0, 4.0, 4.0, 4.0, 6.0]
    );
    // Weighted: [3, 1] with weights [1, 3] → (3·1 + 1·3)/4 = 1.5.
    assert_eq!(
        isotonic_non_decreasing(&[3.0, 1.0], &[1.0, 3.0]),
        vec![1.5, 1.5]
    );
    // Non-increasing: [4, 5, 1] → pool (4, 5) = 4.5.
    assert_eq!(
        isotonic_non_increasing(&[4.0, 5.0, 1.0], &[]),
        vec![4.5, 4.5, 1.0]
    );
    // Monotone input is returned unchanged.
    let m = [0.0, 0.1, 0.1, 0.7];
    assert_eq!(isotonic_non_decreasing(&m, &[]), m.to_vec());
}

#[test]
fn noisy_drainage_curve_gives_monotone_table_with_exact_end_points() {
    let (sw, krw, krn, pc) = noisy_drainage();
    let curve = Curve {
        process: Process::Drainage,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let t = build_table(&curve, &TableOptions::default()).unwrap();
    let r = &t.rows;
    assert_eq!(r.len(), 21);
    assert!(r.sw.windows(2).all(|w| w[0] < w[1]));
    assert!(is_non_decreasing(&r.krw), "{:?}", r.krw);
    assert!(is_non_increasing(&r.krn), "{:?}", r.krn);
    assert!(is_non_increasing(&r.pc_pa), "{:?}", r.pc_pa);
    assert!(r.krw.iter().chain(&r.krn).all(|v| *v >= 0.0));
    // End points are the sampled Sw range, bit for bit.
    let lo = sw.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = sw.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    assert_eq!(r.sw[0], lo);
    assert_eq!(r.sw[20], hi);
    // krn is zero at the top (Sw = 1, no oil) by the default rule.
    assert_eq!(r.krn[20], 0.0);
    // krw at the lowest Sw is the monotone value there: the −1e-15 raised to 0.
    assert_eq!(r.krw[0], 0.0);
    // Pc at the lowest Sw is the sampled value (no violation there).
    assert_eq!(r.pc_pa[0], pc[15]);
    // What changed: the Sw swap is a reversal; one repeated Sw merged.
    assert_eq!(t.report.n_sw_reversals, 1);
    assert_eq!(t.report.n_merged, 1);
    assert!(t.report.krw.n_changed >= 2 && t.report.krw.max_abs_change > 0.0);
    assert!(t.report.krn.n_changed >= 2);
    // Pc (hand analysis of the defects): the back-step pools samples 8 and
    // 9 (25 Pa each), the swapped Sw pools samples 10 and 11, and the merged
    // samples 12 and 13 each move to their mean, the largest change.
    assert_eq!(t.report.pc_pa.n_changed, 6);
    let merge_change = (pc[13] - pc[12]).abs() / 2.0;
    assert!((t.report.pc_pa.max_abs_change - merge_change).abs() < 1e-9);
}

#[test]
fn monotone_curve_passes_through_unchanged() {
    // An imbibition curve (Sw rising from Swi = 0.2 to 1 − Snr = 0.7) that
    // is already monotone, with krn = 0 at the end: nothing changes, and a
    // table on the same Sw grid reproduces the samples.
    let sw: Vec<f64> = (0..=10).map(|i| 0.2 + 0.05 * i as f64).collect();
    let swn: Vec<f64> = sw.iter().map(|s| (s - 0.2) / 0.5).collect();
    let krw: Vec<f64> = swn.iter().map(|x| 0.3 * x * x).collect();
    let mut krn: Vec<f64> = swn.iter().map(|x| 0.9 * (1.0 - x).powi(3)).collect();
    krn[10] = 0.0;
    let pc: Vec<f64> = swn.iter().map(|x| 1500.0 - 4000.0 * x).collect();
    let curve = Curve {
        process: Process::Imbibition,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let opts = TableOptions {
        n_points: 11,
        ..TableOptions::default()
    };
    let t = build_table(&curve, &opts).unwrap();
    assert_eq!(t.report, TableReport::default());
    for i in 0..=10 {
        assert!((t.rows.sw[i] - sw[i]).abs() < 1e-15);
        assert!((t.rows.krw[i] - krw[i]).abs() < 1e-12);
        assert!((t.rows.krn[i] - krn[i]).abs() < 1e-12);
        assert!((t.rows.pc_pa[i] - pc[i]).abs() < 1e-9);
    }
    assert_eq!(t.rows.sw[10], sw[10]);
}

#[test]
fn end_point_options_force_zero_kr() {
    let sw = [0.3, 0.5, 0.8];
    let krw = [0.05, 0.2, 0.6];
    let krn = [0.7, 0.3, 0.1];
    let pc = [3000.0, 1000.0, 200.0];
    let curve = Curve {
        process: Process::Imbibition,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let forced = TableOptions {
        n_points: 5,
        krw_zero_at_min_sw: true,
        krn_zero_at_max_sw: true,
        ..TableOptions::default()
    };
    let t = build_table(&curve, &forced).unwrap();
    assert_eq!((t.rows.krw[0], t.rows.krn[4]), (0.0, 0.0));
    assert_eq!(t.report.krw.n_changed, 1);
    assert_eq!(t.report.krw.max_abs_change, 0.05);
    assert_eq!(t.report.krn.max_abs_change, 0.1);
    let kept = TableOptions {
        n_points: 5,
        krw_zero_at_min_sw: false,
        krn_zero_at_max_sw: false,
        ..TableOptions::default()
    };
    let t = build_table(&curve, &kept).unwrap();
    assert_eq!((t.rows.krw[0], t.rows.krn[4]), (0.05, 0.1));
    // Linear interpolation at Sw = 0.425 (row 1): krw = 0.05 + 0.625·0.15.
    assert!((t.rows.krw[1] - (0.05 + 0.625 * 0.15)).abs() < 1e-15);
}

#[test]
fn csv_round_trip_is_bit_exact() {
    let (sw, krw, krn, pc) = noisy_drainage();
    let curve = Curve {
        process: Process::Drainage,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let mut rows = build_table(&curve, &TableOptions::default()).unwrap().rows;
    rows.krw[1] = 1.234_567_890_123e-9; // a small value in exponent form
    let text = write_csv(&rows).unwrap();
    assert!(text.starts_with("sw,krw,krn,pc_pa\n"));
    assert_eq!(text.lines().count(), rows.len() + 1);
    assert_eq!(parse_csv(&text).unwrap(), rows);
}

#[test]
fn keyword_table_round_trip_within_formatting_precision() {
    let (sw, krw, krn, pc) = noisy_drainage();
    let curve = Curve {
        process: Process::Drainage,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let rows = build_table(&curve, &TableOptions::default()).unwrap().rows;
    let opts = KeywordTableOptions {
        source_run: "sample run 7\nsecond line".into(),
        process: Some(Process::Drainage),
        comments: vec!["monotone by isotonic regression".into()],
        ..KeywordTableOptions::default()
    };
    let text = write_keyword_table(&rows, &opts).unwrap();
    // Layout: comments, the keyword alone on a line, 4 numbers per data
    // line, a terminating slash.
    let lines: Vec<&str> = text.lines().collect();
    assert!(lines[0].starts_with("--"));
    assert!(text.contains("-- Source run: sample run 7 second line\n"));
    assert!(text.contains("Pc = Po - Pw (bar)"));
    let kw = lines.iter().position(|l| *l == "SWOF").unwrap();
    assert!(lines[..kw].iter().all(|l| l.starts_with("--")));
    assert_eq!(*lines.last().unwrap(), "/");
    let data: Vec<&&str> = lines[kw + 1..lines.len() - 1]
        .iter()
        .filter(|l| !l.starts_with("--"))
        .collect();
    assert_eq!(data.len(), rows.len());
    assert!(data.iter().all(|l| l.split_whitespace().count() == 4));

    let back = parse_keyword_table(&text).unwrap();
    assert_eq!(back.keyword, "SWOF");
    assert_eq!(back.rows.len(), rows.len());
    for i in 0..rows.len() {
        // Sw: 6 decimals → half a unit of 1e-6; others: 7 significant
        // digits → relative 5e-7.
        assert!((back.rows.sw[i] - rows.sw[i]).abs() <= 5e-7 + 1e-15);
        for (a, b) in [
            (back.rows.krw[i], rows.krw[i]),
            (back.rows.krn[i], rows.krn[i]),
            (back.rows.pc_pa[i], rows.pc_pa[i]),
        ] {
            assert!((a - b).abs() <= 5e-7 * b.abs() + 1e-300, "{a} vs {b}");
        }
    }
}

#[test]
fn keyword_parser_accepts_compact_layouts_and_rejects_bad_ones() {
    let text = "-- header\nSWOF -- trailing comment\n0.2 0 0.8 1.5\n0.5 0.1 0.3 0.5 \
                0.8 0.4 0 0.1D0 /\n";
    let t = parse_keyword_table(text).unwrap();
    assert_eq!(t.rows.sw, vec![0.2, 0.5, 0.8]);
    assert_eq!(t.rows.pc_pa, vec![1.5e5, 0.5e5, 0.1e5]);
    assert!(matches!(
        parse_keyword_table("SWOF\n0.2 0 0.8 1.5\n"),
        Err(TableError::Parse { detail, .. }) if detail.contains("not terminated")
    ));
    assert!(matches!(
        parse_keyword_table("SWOF\n0.2 0 0.8\n/\n"),
        Err(TableError::Parse { .. })
    ));
    assert!(matches!(
        parse_keyword_table("SWOF\n0.2 x 0.8 1\n/\n"),
        Err(TableError::Parse { line: 2, .. })
    ));
    assert!(matches!(
        parse_keyword_table("SWOF\n0.2 0 0.8 1\n/\n0.3\n"),
        Err(TableError::Parse { line: 4, .. })
    ));
    assert!(matches!(
        parse_csv("sw,krw,krn\n0.1,0,1\n"),
        Err(TableError::Parse { line: 1, .. })
    ));
    assert!(matches!(
        parse_csv("sw,krw,krn,pc_pa\n0.1,0,1,nan\n"),
        Err(TableError::Parse { line: 2, .. })
    ));
}

#[test]
fn bad_curves_and_rows_give_typed_errors() {
    let sw = [0.2, 0.5, 0.8];
    let ok = [0.1, 0.2, 0.3];
    let curve = |sw: &'static [f64], krw: &'static [f64]| Curve {
        process: Process::Imbibition,
        sw,
        krw,
        krn: &[0.3, 0.2, 0.1],
        pc_pa: &[3.0, 2.0, 1.0],
    };
    let o = TableOptions::default();
    assert!(matches!(
        build_table(&curve(&[0.2, 0.5, 0.8], &[0.1, 0.2]), &o),
        Err(TableError::LengthMismatch { column: "krw", .. })
    ));
    assert!(matches!(
        build_table(&curve(&[0.2, f64::NAN, 0.8], &[0.1, 0.2, 0.3]), &o),
        Err(TableError::NotFinite {
            column: "sw",
            index: 1,
            ..
        })
    ));
    assert!(matches!(
        build_table(&curve(&[0.2, 0.5, 1.2], &[0.1, 0.2, 0.3]), &o),
        Err(TableError::OutOfRange {
            column: "sw",
            index: 2,
            ..
        })
    ));
    assert!(matches!(
        build_table(&curve(&[0.4, 0.4, 0.4], &[0.1, 0.2, 0.3]), &o),
        Err(TableError::NoSwRange { .. })
    ));
    let empty = Curve {
        process: Process::Drainage,
        sw: &[],
        krw: &[],
        krn: &[],
        pc_pa: &[],
    };
    assert!(matches!(
        build_table(&empty, &o),
        Err(TableError::TooFewPoints { found: 0, .. })
    ));
    let one_row = TableOptions { n_points: 1, ..o };
    let c = Curve {
        process: Process::Imbibition,
        sw: &sw,
        krw: &ok,
        krn: &[0.3, 0.2, 0.1],
        pc_pa: &[3.0, 2.0, 1.0],
    };
    assert!(matches!(
        build_table(&c, &one_row),
        Err(TableError::BadOption {
            name: "n_points",
            ..
        })
    ));
    // Writers refuse rows whose Sw would not increase at 6 decimals.
    let rows = TableRows {
        sw: vec![0.2, 0.200_000_1],
        krw: vec![0.0, 0.1],
        krn: vec![0.5, 0.4],
        pc_pa: vec![100.0, 50.0],
    };
    assert!(matches!(
        write_keyword_table(&rows, &KeywordTableOptions::default()),
        Err(TableError::SwNotIncreasing { index: 1, .. })
    ));
    assert!(write_csv(&rows).is_ok());
    let bad_kw = KeywordTableOptions {
        keyword: "swof table".into(),
        ..KeywordTableOptions::default()
    };
    assert!(matches!(
        write_keyword_table(&rows, &bad_kw),
        Err(TableError::BadOption {
            name: "keyword",
            ..
        })
    ));
}

/// An imbibition from Swi = 0.2 to 1 − Snr = 0.7 whose last two samples
/// share Sw = 0.7 (nothing moved as Pc fell from 0 to −1e5 Pa), with a
/// corner-film krw at Swi and a small krn left at the end.
fn imbibition_samples() -> [Vec<f64>; 4] {
    let sw = vec![0.2, 0.25, 0.3, 0.4, 0.5, 0.6, 0.65, 0.7, 0.7];
    let krw = vec![8.8e-8, 1e-4, 1e-3, 0.01, 0.05, 0.12, 0.18, 0.25, 0.25];
    let krn = vec![0.9, 0.7, 0.55, 0.3, 0.15, 0.05, 0.01, 0.002, 0.002];
    let pc = vec![
        1.0e5, 3000.0, 2000.0, 1500.0, 1000.0, 800.0, 500.0, 0.0, -1.0e5,
    ];
    [sw, krw, krn, pc]
}

#[test]
fn simulator_conventions_hold_row_by_row() {
    // Common practice for simulator input: rows from connate water to
    // Sw = 1, krw exactly 0 at the first row, krn 0 from 1 − Snr on, krw
    // held at its end point beyond 1 − Snr, only simulated Pc values.
    let [sw, krw, krn, pc] = imbibition_samples();
    let curve = Curve {
        process: Process::Imbibition,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let t = build_table(&curve, &TableOptions::for_simulators(21, None)).unwrap();
    let r = &t.rows;
    let n = r.len();
    // 8 distinct Sw (the two at 0.7 merged) and the row at Sw = 1.
    assert_eq!(n, 9);
    assert_eq!((r.sw[0], r.krw[0]), (0.2, 0.0));
    for i in 0..n - 1 {
        // Each row is a simulated sample: its Sw, its Pc.
        let k = sw.iter().position(|&s| s == r.sw[i]).unwrap();
        assert_eq!(r.pc_pa[i], pc[k], "row {i}");
        if i > 0 && i < n - 2 {
            assert_eq!((r.krw[i], r.krn[i]), (krw[k], krn[k]), "row {i}");
        }
    }
    // At 1 − Snr: krn = 0, and Pc where Sw = 0.7 was first reached (0),
    // not the mean −5e4 Pa of the two samples there.
    assert_eq!((r.sw[n - 2], r.krn[n - 2], r.pc_pa[n - 2]), (0.7, 0.0, 0.0));
    assert_eq!(
        (r.sw[n - 1], r.krw[n - 1], r.krn[n - 1], r.pc_pa[n - 1]),
        (1.0, 0.25, 0.0, 0.0)
    );
    // Fewer rows asked than samples: the samples nearest to evenly spaced
    // Sw (0.2, 0.45, 0.7 → 0.2, 0.4 or 0.5, 0.7) and Sw = 1.
    let t = build_table(&curve, &TableOptions::for_simulators(3, None)).unwrap();
    assert_eq!(t.rows.len(), 4);
    assert_eq!((t.rows.sw[0], t.rows.sw[2], t.rows.sw[3]), (0.2, 0.7, 1.0));
    assert!(t.rows.sw[1] == 0.4 || t.rows.sw[1] == 0.5);

    // Drainage from Sw = 1 (Pc 0 at the start): the entry pressure given
    // replaces the 0 at Sw = 1; no extra row (the curve reaches 1 up to
    // round-off, which is snapped to 1).
    let dsw = [1.0 - 2e-15, 0.9, 0.6, 0.3, 0.15];
    let dkrw = [1.0, 0.6, 0.2, 0.01, 1e-6];
    let dkrn = [0.0, 0.0, 0.1, 0.5, 0.8];
    let dpc = [0.0, 1600.0, 2500.0, 6000.0, 20000.0];
    let d = Curve {
        process: Process::Drainage,
        sw: &dsw,
        krw: &dkrw,
        krn: &dkrn,
        pc_pa: &dpc,
    };
    let t = build_table(&d, &TableOptions::for_simulators(21, Some(1500.0))).unwrap();
    let r = &t.rows;
    assert_eq!(r.len(), 5);
    assert_eq!((r.sw[0], r.krw[0], r.pc_pa[0]), (0.15, 0.0, 20000.0));
    assert_eq!((r.sw[4], r.krn[4], r.pc_pa[4]), (1.0, 0.0, 1500.0));
    assert_eq!(r.pc_pa[1..4], [6000.0, 2500.0, 1600.0]);
}

#[test]
fn keyword_files_state_units_and_row_count_and_read_back() {
    let [sw, krw, krn, pc] = imbibition_samples();
    let curve = Curve {
        process: Process::Imbibition,
        sw: &sw,
        krw: &krw,
        krn: &krn,
        pc_pa: &pc,
    };
    let rows = build_table(&curve, &TableOptions::for_simulators(21, None))
        .unwrap()
        .rows;
    let n = rows.len();
    // psi = 0.45359237 kg × 9.80665 m/s² / (0.0254 m)² (definitions).
    assert!((TableUnits::Psi.pa_per_unit() - 6894.757293168361).abs() < 1e-9);
    for units in [TableUnits::Bar, TableUnits::Kpa, TableUnits::Psi] {
        let opts = KeywordTableOptions {
            units,
            ..KeywordTableOptions::default()
        };
        let text = write_keyword_table(&rows, &opts).unwrap();
        assert!(text.contains(&format!("-- Pc unit: {}\n", units.as_str())));
        assert!(text.contains(&format!("Pc = Po - Pw ({})", units.as_str())));
        assert!(text.contains(&format!("-- {n} rows per table")));
        let back = parse_keyword_table(&text).unwrap();
        assert_eq!(back.rows.len(), n);
        // The 2000 Pa of the row at Sw = 0.3 in the unit: 0.02 bar, 2 kPa,
        // 0.2900755 psi.
        let first = text
            .lines()
            .find(|l| l.trim_start().starts_with("0.300000"))
            .unwrap();
        let pc_text: f64 = first.split_whitespace().nth(3).unwrap().parse().unwrap();
        let expected = 2000.0 / units.pa_per_unit();
        assert!((pc_text - expected).abs() <= 1e-6 * expected);
        for i in 0..n {
            assert!((back.rows.pc_pa[i] - rows.pc_pa[i]).abs() <= 1e-6 * rows.pc_pa[i].abs());
        }
    }
    let gas = write_gas_water_tables(&rows, &KeywordTableOptions::default()).unwrap();
    let t = parse_keyword_columns(&gas, 3).unwrap();
    assert_eq!(t.len(), 2);
    assert_eq!(t[0].0, "SWFN");
    assert_eq!(t[1].0, "SGFN");
    // SGFN: Sg rising from 0 (Sw = 1) with krg 0, ending at 1 − Swi.
    assert_eq!(t[1].1[0], vec![0.0, 0.0, 0.0]);
    assert!((t[1].1[n - 1][0] - 0.8).abs() < 1e-12);
    assert!((t[1].1[n - 1][1] - rows.krn[0]).abs() < 1e-6 * rows.krn[0]);
    assert!(matches!(
        declared_units("-- Pc unit: atm\nSWOF\n/\n"),
        Err(TableError::Parse { line: 1, .. })
    ));
    assert!(matches!(
        parse_keyword_columns("SWFN\n0.2 0 1\n", 3),
        Err(TableError::Parse { line: 1, .. })
    ));
}

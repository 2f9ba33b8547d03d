//! Numbers as the reports print them: results with significant digits,
//! inputs as written.

/// A number with `sig` significant digits; "n/a" for NaN, "∞"/"−∞" for
/// infinities; scientific notation outside `[1e-3, 1e6)`.
pub fn number(v: f64, sig: usize) -> String {
    if v.is_nan() {
        return "n/a".into();
    }
    if v.is_infinite() {
        return if v > 0.0 {
            "∞".into()
        } else {
            "−∞".into()
        };
    }
    if v == 0.0 {
        return "0".into();
    }
    let sig = sig.clamp(1, 12);
    let a = v.abs();
    if !(1e-3..1e6).contains(&a) {
        return format!("{:.*e}", sig - 1, v);
    }
    let decimals = (sig as i32 - 1 - a.log10().floor() as i32).max(0) as usize;
    format!("{v:.decimals$}")
}

/// An input value as written: the shortest text that reads back to the
/// same number (scientific notation outside `[1e-4, 1e7)`); "n/a" for NaN.
pub fn input_number(v: f64) -> String {
    if v.is_nan() {
        return "n/a".into();
    }
    let a = v.abs();
    if v == 0.0 || !v.is_finite() || (1e-4..1e7).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

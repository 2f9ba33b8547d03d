//! Tick labels: decades on a log axis as powers of ten, other values with
//! up to four significant digits.

use super::Scale;

/// Tick label: decades on a log axis as `10ⁿ`, other values with up to four
/// significant digits (scientific notation outside `[1e-3, 1e5)`).
pub(super) fn tick_label(v: f64, scale: Scale) -> String {
    if scale == Scale::Log && v > 0.0 {
        let e = v.log10();
        if (e - e.round()).abs() < 1e-9 {
            let k = e.round() as i32;
            return match k {
                0 => "1".to_string(),
                1 => "10".to_string(),
                _ => format!("10{}", superscript(k)),
            };
        }
    }
    format_number(v)
}

fn superscript(k: i32) -> String {
    let digits = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if k < 0 {
        s.push('⁻');
    }
    for c in k.unsigned_abs().to_string().chars() {
        s.push(digits[c.to_digit(10).unwrap_or(0) as usize]);
    }
    s
}

/// Up to four significant digits, trailing zeros trimmed.
fn format_number(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return if v == 0.0 {
            "0".to_string()
        } else {
            v.to_string()
        };
    }
    let a = v.abs();
    if !(1e-3..1e5).contains(&a) {
        let s = format!("{v:.3e}");
        // Trim the mantissa: "2.500e4" → "2.5e4".
        if let Some((m, e)) = s.split_once('e') {
            let m = trim_zeros(m);
            return format!("{m}e{e}");
        }
        return s;
    }
    let decimals = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
    trim_zeros(&format!("{v:.decimals$}")).to_string()
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}

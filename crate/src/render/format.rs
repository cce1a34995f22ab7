//! Number formatting for labels. Every number the page shows is formatted here, so the
//! page, the CLI and exported figures write numbers the same way.

/// `-` → `−` (U+2212): the typographic minus, as wide as `+` so columns of labels align.
pub fn typographic_minus(s: String) -> String {
    if s.contains('-') {
        s.replace('-', "\u{2212}")
    } else {
        s
    }
}

/// Integer exponent in Unicode superscripts: `-4` → `⁻⁴`.
pub fn superscript(n: i32) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if n < 0 {
        s.push('⁻');
    }
    for d in n.unsigned_abs().to_string().bytes() {
        s.push(DIGITS[(d - b'0') as usize]);
    }
    s
}

/// Drops trailing zeros of a decimal fraction (`0.5000` → `0.5`, `12.000` → `12`).
fn trim_zeros(s: String) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// `v` rounded to `sig` significant digits (at least 1), without trailing zeros: plain
/// notation for magnitudes from 10⁻³ up to 10⁵, otherwise `m × 10ᵉ`.
pub fn format_sig(v: f64, sig: usize) -> String {
    let sig = sig.max(1);
    if v == 0.0 || !v.is_finite() {
        return if v == 0.0 { "0".into() } else { v.to_string() };
    }
    let e = v.abs().log10().floor() as i32;
    if (-4..5).contains(&e) {
        let decimals = (sig as i32 - 1 - e).max(0) as usize;
        return typographic_minus(trim_zeros(format!("{v:.decimals$}")));
    }
    // `{:e}` renormalises when rounding carries (9.9996e-5 → 1.000e-4).
    let text = format!("{:.*e}", sig - 1, v);
    let (mantissa, exp) = text.split_once('e').expect("{:e} always writes an exponent");
    let exp: i32 = exp.parse().expect("{:e} writes an integer exponent");
    typographic_minus(format!("{} × 10{}", trim_zeros(mantissa.to_string()), superscript(exp)))
}

/// Count with thousands separated by commas: `76800` → `76,800`.
pub fn format_count(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, ch) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

/// `value unit`, or just `value` for dimensionless data (unit label `1`).
pub fn with_unit(value: String, unit: &str) -> String {
    if unit.is_empty() || unit == "1" {
        value
    } else {
        format!("{value} {unit}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn significant_digits_plain_and_scientific() {
        assert_eq!(format_sig(0.0005, 4), "0.0005");
        assert_eq!(format_sig(0.123456, 3), "0.123");
        assert_eq!(format_sig(12345.6, 3), "12346");
        assert_eq!(format_sig(-2.5, 4), "\u{2212}2.5");
        assert_eq!(format_sig(2.345e-5, 3), "2.35 × 10⁻⁵");
        assert_eq!(format_sig(9.9996e-5, 3), "1 × 10⁻⁴");
        assert_eq!(format_sig(6.02e23, 3), "6.02 × 10²³");
        assert_eq!(format_sig(0.0, 3), "0");
    }

    #[test]
    fn counts_and_units() {
        assert_eq!(format_count(7), "7");
        assert_eq!(format_count(76800), "76,800");
        assert_eq!(format_count(1234567), "1,234,567");
        assert_eq!(with_unit("3".into(), "m/s"), "3 m/s");
        assert_eq!(with_unit("3".into(), "1"), "3");
        assert_eq!(superscript(-12), "⁻¹²");
    }
}

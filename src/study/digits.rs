//! Significant-digit accounting: how many leading digits of a value an error
//! estimate leaves standing, and how to print a value to the digits it has.

/// Digits that any `f64` result can carry at best.
pub const MAX_DIGITS: u32 = 15;

/// The number of significant digits of `value` that an error of size `error`
/// leaves trustworthy: `⌊log10(|value| / error)⌋`, clipped to `0..=15`.
/// A zero error counts as the last digit of an `f64`. A non-finite value or
/// error trusts no digit.
pub fn trusted_digits(value: f64, error: f64) -> u32 {
    if !value.is_finite() || !error.is_finite() || value == 0.0 {
        return 0;
    }
    let err = error.abs().max(f64::EPSILON * value.abs());
    let d = (value.abs() / err).log10().floor();
    d.clamp(0.0, MAX_DIGITS as f64) as u32
}

/// Digits to which two values agree: `⌊log10(scale / |a − b|)⌋` with
/// `scale = max(|a|, |b|)`, clipped to `0..=15`.
pub fn agreement_digits(a: f64, b: f64) -> u32 {
    let scale = if a.abs() > b.abs() { a } else { b };
    trusted_digits(scale, (a - b).abs())
}

/// `x` printed with `n` significant digits (at least 1, at most 17), in plain
/// notation for moderate magnitudes and in scientific notation otherwise.
/// Trailing zeros stay: they are digits the reader may trust.
pub fn with_digits(x: f64, n: u32) -> String {
    if !x.is_finite() {
        return if x.is_nan() { "not a number".into() } else if x > 0.0 { "∞".into() } else { "−∞".into() };
    }
    let n = n.clamp(1, 17) as usize;
    if x == 0.0 {
        return "0".into();
    }
    let sci = format!("{:.*e}", n - 1, x);
    let exp: i32 = sci.rsplit('e').next().and_then(|e| e.parse().ok()).unwrap_or(0);
    if (-4..=9).contains(&exp) {
        let decimals = (n as i32 - 1 - exp).max(0) as usize;
        let rounded: f64 = sci.parse().unwrap_or(x);
        format!("{:.*}", decimals, rounded)
    } else {
        let (mant, e) = sci.split_once('e').unwrap_or((sci.as_str(), "0"));
        format!("{mant}e{e}")
    }
}

/// A number as a setting is echoed: up to 6 significant digits, trailing
/// zeros dropped (`0.01`, `1e-6`, `412.5`).
pub fn plain(x: f64) -> String {
    if !x.is_finite() || x == 0.0 {
        return with_digits(x, 1);
    }
    let s = with_digits(x, 6);
    let (mant, exp) = match s.split_once('e') {
        Some((m, e)) => (m.to_string(), format!("e{e}")),
        None => (s.clone(), String::new()),
    };
    let mant = if mant.contains('.') { mant.trim_end_matches('0').trim_end_matches('.').to_string() } else { mant };
    mant + &exp
}

/// An error bound printed with one significant digit, rounded up so that it
/// never understates the estimate (`0.0273` → `0.03`).
pub fn error_text(e: f64) -> String {
    if !e.is_finite() {
        return "unknown".into();
    }
    if e <= 0.0 {
        return "0".into();
    }
    let p = e.log10().floor();
    let scale = 10f64.powf(p);
    let m = (e / scale * (1.0 - 1e-12)).ceil();
    with_digits(m * scale, 1)
}

/// The value printed to its trusted digits plus one guard digit, as engineers
/// quote a result with its uncertainty (`412.38` for `412.3791 ± 0.03`).
pub fn value_text(value: f64, error: f64) -> String {
    let d = trusted_digits(value, error);
    with_digits(value, (d + 1).min(MAX_DIGITS))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn digits_of_the_examples() {
        // 412.3791 ± 0.03: the fourth digit (the 4 of 412.4) is sound (common practice, no source).
        assert_eq!(trusted_digits(412.3791, 0.03), 4);
        assert_eq!(value_text(412.3791, 0.03), "412.38");
        assert_eq!(error_text(0.0273), "0.03");
        assert_eq!(error_text(0.03), "0.03");
        assert_eq!(trusted_digits(1.0, 0.5), 0);
        assert_eq!(trusted_digits(1.0, 0.0), 15);
        assert_eq!(trusted_digits(f64::NAN, 0.1), 0);
        assert_eq!(agreement_digits(2.0, 2.0000021), 5);
    }

    #[test]
    fn printing() {
        assert_eq!(with_digits(0.000123456, 3), "0.000123");
        assert_eq!(with_digits(1.5e-7, 2), "1.5e-7");
        assert_eq!(with_digits(123456.0, 2), "120000");
        assert_eq!(with_digits(-2.5, 3), "-2.50");
        assert_eq!(with_digits(3.0e12, 3), "3.00e12");
        assert_eq!(error_text(7.2e-9), "8e-9");
        assert_eq!(plain(0.0100), "0.01");
        assert_eq!(plain(1e-6), "1e-6");
        assert_eq!(plain(412.5), "412.5");
    }
}

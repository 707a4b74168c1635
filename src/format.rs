//! Numbers formatted for people: thousands separators, byte units.

/// `1234567` → `1,234,567`.
pub fn group_digits(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Bytes with a binary unit: `1.5 MiB`.
pub fn human_bytes(n: u64) -> String {
    const UNITS: [&str; 5] = ["bytes", "KiB", "MiB", "GiB", "TiB"];
    let mut v = n as f64;
    let mut unit = 0;
    while v >= 1024.0 && unit < UNITS.len() - 1 {
        v /= 1024.0;
        unit += 1;
    }
    if unit == 0 { format!("{n} bytes") } else { format!("{v:.1} {}", UNITS[unit]) }
}

/// A number for people: whole numbers with thousands separators, others
/// to six significant digits without trailing zeros, very large or small
/// ones in scientific notation.
pub fn decimal(x: f64) -> String {
    if !x.is_finite() || x == 0.0 {
        return if x == 0.0 { "0".into() } else { x.to_string() };
    }
    let a = x.abs();
    if !(1e-4..1e15).contains(&a) {
        return format!("{x:.3e}");
    }
    let sign = if x < 0.0 { "-" } else { "" };
    let whole_digits = a.log10().floor() as i32 + 1;
    let decimals = (6 - whole_digits).max(0) as usize;
    let text = format!("{a:.decimals$}");
    let (whole, fraction) = text.split_once('.').unwrap_or((&text, ""));
    let fraction = fraction.trim_end_matches('0');
    let whole = group_digits(whole.parse().unwrap_or(0));
    if fraction.is_empty() { format!("{sign}{whole}") } else { format!("{sign}{whole}.{fraction}") }
}

/// A share of a whole as a percentage: `12.5 %`, `< 0.1 %` for tiny ones.
pub fn share(part: u64, whole: u64) -> String {
    if whole == 0 {
        return "–".into();
    }
    let p = part as f64 * 100.0 / whole as f64;
    if part > 0 && p < 0.1 { "< 0.1 %".into() } else { format!("{p:.1} %") }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_are_formatted_for_people() {
        assert_eq!(decimal(0.0), "0");
        assert_eq!(decimal(-0.0), "0");
        assert_eq!(decimal(1234567.0), "1,234,567");
        assert_eq!(decimal(49993.87943469125), "49,993.9");
        assert_eq!(decimal(-2.5), "-2.5");
        assert_eq!(decimal(0.012345678), "0.0123457");
        assert_eq!(decimal(3.0e-7), "3.000e-7");
        assert_eq!(decimal(2.0e20), "2.000e20");
        assert_eq!(decimal(f64::NAN), "NaN");
        assert_eq!(share(1, 8), "12.5 %");
        assert_eq!(share(1, 100_000), "< 0.1 %");
        assert_eq!(share(0, 0), "–");
    }

    #[test]
    fn numbers_are_formatted_for_people() {
        assert_eq!(group_digits(0), "0");
        assert_eq!(group_digits(1234), "1,234");
        assert_eq!(group_digits(1234567), "1,234,567");
        assert_eq!(human_bytes(512), "512 bytes");
        assert_eq!(human_bytes(1536), "1.5 KiB");
        assert_eq!(human_bytes(5 * 1024 * 1024), "5.0 MiB");
    }
}

//! Deterministic number formatting for files: a fixed number of significant
//! digits, plain decimal notation, no negative zero. The same value always
//! gives the same text, so reports are byte-identical across runs.

/// `x` with `digits` significant digits in plain decimal notation (at most
/// 12 decimals). Non-finite values print as `NaN`, `inf` or `-inf`.
pub fn sig(x: f64, digits: usize) -> String {
    if !x.is_finite() {
        return if x.is_nan() {
            "NaN".into()
        } else if x > 0.0 {
            "inf".into()
        } else {
            "-inf".into()
        };
    }
    if x == 0.0 {
        return "0".into();
    }
    let magnitude = x.abs().log10().floor() as i64;
    let decimals = (digits as i64 - 1 - magnitude).clamp(0, 12) as usize;
    let text = format!("{x:.decimals$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    };
    if text.trim_start_matches('-').chars().all(|c| c == '0') {
        "0".into()
    } else {
        text
    }
}

/// `x` rounded to `digits` significant digits, as a number (for JSON).
pub fn round_sig(x: f64, digits: usize) -> f64 {
    if !x.is_finite() || x == 0.0 {
        return if x.is_finite() { 0.0 } else { x };
    }
    sig(x, digits).parse().unwrap_or(x)
}

/// Fixed decimals for tables and prose (`-0.0` prints as `0.0`).
pub fn fixed(x: f64, decimals: usize) -> String {
    let text = format!("{x:.decimals$}");
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
        text[1..].to_string()
    } else {
        text
    }
}

/// User text (a script's strings, a fluid's id, an error quoting them) made
/// safe to echo to a terminal: control characters other than newline and
/// tab are shown as escapes (`\u{1b}`), so an escape sequence in a file
/// cannot recolour, move or clear the user's terminal.
pub fn terminal_safe(text: &str) -> std::borrow::Cow<'_, str> {
    if !text
        .chars()
        .any(|c| c.is_control() && c != '\n' && c != '\t')
    {
        return std::borrow::Cow::Borrowed(text);
    }
    text.chars()
        .map(|c| {
            if c.is_control() && c != '\n' && c != '\t' {
                c.escape_unicode().to_string()
            } else {
                c.to_string()
            }
        })
        .collect::<String>()
        .into()
}

/// A time or duration in hours as people say it: `20 min`, `2 h`,
/// `1 h 30 min`, `0 h`; a time that is no whole number of minutes keeps
/// its hours (`0.1234 h`).
pub fn hours_text(h: f64) -> String {
    let minutes = h * 60.0;
    let whole = minutes.round();
    if !h.is_finite() || h < 0.0 || (minutes - whole).abs() > 1e-6 * minutes.max(1.0) {
        return format!("{} h", sig(h, 4));
    }
    let m = whole as u64;
    match (m / 60, m % 60) {
        (0, 0) => "0 h".into(),
        (0, m) => format!("{m} min"),
        (h, 0) => format!("{h} h"),
        (h, m) => format!("{h} h {m} min"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hours_read_as_people_say_them() {
        assert_eq!(hours_text(0.0), "0 h");
        assert_eq!(hours_text(1.0 / 3.0), "20 min");
        assert_eq!(hours_text(1.0 / 6.0), "10 min");
        assert_eq!(hours_text(2.0), "2 h");
        assert_eq!(hours_text(1.5), "1 h 30 min");
        assert_eq!(hours_text(48.25), "48 h 15 min");
        assert_eq!(hours_text(0.1234), "0.1234 h");
    }

    #[test]
    fn significant_digits() {
        assert_eq!(sig(118.04567, 6), "118.046");
        assert_eq!(sig(0.000123456789, 4), "0.0001235");
        assert_eq!(sig(1234567.0, 3), "1234567");
        assert_eq!(sig(-0.00000123, 3), "-0.00000123");
        // At most 12 decimals: smaller magnitudes print as zero.
        assert_eq!(sig(-1e-13, 3), "0");
        assert_eq!(sig(-1e-20, 3), "0");
        assert_eq!(sig(2.5, 6), "2.5");
        assert_eq!(sig(0.0, 6), "0");
        assert_eq!(round_sig(1.23456789, 3), 1.23);
        assert_eq!(fixed(-0.01, 1), "0.0");
        assert_eq!(fixed(-0.06, 1), "-0.1");
    }
}

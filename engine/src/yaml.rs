//! One front for every YAML data file users hand us (fluids, patients,
//! sweep specs, tolerance files, the validation dossier): nesting bounded
//! before the parser sees the text (the parser's time grows with the square
//! of the nesting of `[`/`{`; 100,000 levels took minutes), and a key given
//! twice pointed at the line that repeats it rather than at the start of
//! its map.

use serde::de::DeserializeOwned;

/// Deepest nesting of collections accepted. The bundled files nest 4
/// levels; 64 leaves room for any hand-written file.
pub const MAX_YAML_DEPTH: usize = 64;

/// A YAML file that cannot be read as the type asked for.
#[derive(Debug, Clone, PartialEq)]
pub struct YamlError {
    /// Line and column (1-based), where known.
    pub location: Option<(usize, usize)>,
    /// What is wrong (without the location).
    pub message: String,
}

/// Parse `text` as a `T`, with the checks above.
pub fn from_str<T: DeserializeOwned>(text: &str) -> Result<T, YamlError> {
    if let Some((line, column)) = too_deep(text) {
        return Err(YamlError {
            location: Some((line, column)),
            message: format!(
                "nested more than {MAX_YAML_DEPTH} levels deep (no Tidewater file needs that many)"
            ),
        });
    }
    serde_yaml::from_str(text).map_err(|e| {
        let location = e.location().map(|l| (l.line(), l.column()));
        let message = strip_location(&e.to_string());
        let location = match (duplicated_key(&message), refused_word(&message), location) {
            (Some(key), _, Some(at)) => key_line(text, at, key, 2).or(Some(at)),
            (None, Some(key), Some(at)) => key_line(text, at, key, 1).or(Some(at)),
            _ => location,
        };
        YamlError { location, message }
    })
}

/// The message of a serde_yaml error without its trailing " at line L
/// column C" (the location is carried apart).
fn strip_location(message: &str) -> String {
    match message.rfind(" at line ") {
        Some(i) if message[i + 9..].contains(" column ") => message[..i].to_string(),
        _ => message.to_string(),
    }
}

/// The key named by a duplicate-key error, if it is one.
fn duplicated_key(message: &str) -> Option<&str> {
    for (start, end) in [
        ("duplicate field `", '`'),
        ("duplicate entry with key \"", '"'),
    ] {
        if let Some(i) = message.find(start) {
            let rest = &message[i + start.len()..];
            return rest.find(end).map(|j| &rest[..j]);
        }
    }
    None
}

/// The field named by a refused word (`onset = "sudden" is not one of:
/// ...`, the engine's own message for a choice), if it is one: the parser
/// places such errors at the start of the map, not at the field.
fn refused_word(message: &str) -> Option<&str> {
    let (field, rest) = message.split_once(" = \"")?;
    let field = field.rsplit([' ', ':']).next()?;
    let plain = !field.is_empty() && field.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    (plain && rest.contains("\" is not one of: ")).then_some(field)
}

/// The line (and column) where `key` appears for the `nth` time in the
/// block map whose first key is at `(line, column)`: the keys of a block
/// map sit at that column on later lines until a line indented less, or a
/// new list item at the same column, ends the map.
fn key_line(
    text: &str,
    (line, column): (usize, usize),
    key: &str,
    nth: usize,
) -> Option<(usize, usize)> {
    let indent = column.checked_sub(1)?;
    let mut seen = 0;
    for (number, l) in text.lines().enumerate().skip(line.checked_sub(1)?) {
        let number = number + 1;
        let content = if number == line {
            l.get(indent..)?
        } else {
            let trimmed = l.trim_start();
            if trimmed.is_empty() || trimmed.starts_with('#') {
                continue;
            }
            let here = l.len() - trimmed.len();
            if here < indent || (here == indent && trimmed.starts_with("- ")) {
                return None;
            }
            if here > indent {
                continue;
            }
            trimmed
        };
        let name = content
            .split(':')
            .next()
            .unwrap_or("")
            .trim()
            .trim_matches(['"', '\'']);
        if name == key {
            seen += 1;
            if seen == nth {
                return Some((number, column));
            }
        }
    }
    None
}

/// Where the nesting first goes deeper than [`MAX_YAML_DEPTH`]: flow
/// collections (`[`, `{`) outside quotes and comments, on top of the depth
/// of block indentation (the number of distinct indents open).
fn too_deep(text: &str) -> Option<(usize, usize)> {
    let mut indents: Vec<usize> = Vec::new();
    let mut flow = 0usize;
    for (number, l) in text.lines().enumerate() {
        let trimmed = l.trim_start();
        if flow == 0 && !trimmed.is_empty() && !trimmed.starts_with('#') {
            let here = l.len() - trimmed.len();
            while indents.last().is_some_and(|&i| i > here) {
                indents.pop();
            }
            if indents.last() != Some(&here) {
                indents.push(here);
            }
            if indents.len() > MAX_YAML_DEPTH {
                return Some((number + 1, here + 1));
            }
        }
        let mut quote: Option<char> = None;
        for (col, c) in l.char_indices() {
            match (quote, c) {
                (Some(q), c) if c == q => quote = None,
                (Some(_), _) => {}
                (None, '"' | '\'') => quote = Some(c),
                (None, '#') if col == 0 || l[..col].ends_with([' ', '\t']) => break,
                (None, '[' | '{') => {
                    flow += 1;
                    if indents.len() + flow > MAX_YAML_DEPTH {
                        return Some((number + 1, col + 1));
                    }
                }
                (None, ']' | '}') => flow = flow.saturating_sub(1),
                _ => {}
            }
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Item {
        id: String,
        na: f64,
        k: Option<f64>,
    }

    #[derive(Debug, serde::Deserialize)]
    #[allow(dead_code)]
    struct File {
        items: Vec<Item>,
    }

    #[test]
    fn a_field_given_twice_is_pointed_at_where_it_repeats() {
        let text = "items:\n  - id: a\n    na: 100\n  - id: b\n    # sodium\n    na: 100\n    k: 4\n    na: 154\n";
        let e = from_str::<File>(text).unwrap_err();
        assert_eq!(e.location, Some((8, 5)), "{e:?}");
        assert_eq!(e.message, "items[1]: duplicate field `na`");
        // A key of a map given twice.
        let e = from_str::<serde_yaml::Value>("a: 1\nb: 2\n\na: 3\n").unwrap_err();
        assert_eq!(e.location, Some((4, 1)), "{e:?}");
    }

    #[test]
    fn nesting_beyond_the_bound_is_refused_at_once() {
        let deep = format!("a: {}{}\n", "[".repeat(100_000), "]".repeat(100_000));
        let e = from_str::<serde_yaml::Value>(&deep).unwrap_err();
        assert_eq!(e.location, Some((1, MAX_YAML_DEPTH + 3)), "{e:?}");
        assert!(e.message.contains("nested more than 64"));
        // Block nesting counts too.
        let block: String = (0..100)
            .map(|i| format!("{}k{i}:\n", " ".repeat(i)))
            .collect();
        assert!(from_str::<serde_yaml::Value>(&block)
            .unwrap_err()
            .message
            .contains("nested"));
        // Brackets inside quotes or comments are text.
        let quoted = format!("a: \"{}\" # {}\n", "[".repeat(100), "{".repeat(100));
        assert!(from_str::<serde_yaml::Value>(&quoted).is_ok());
        let ok = format!("a: {}{}\n", "[".repeat(10), "]".repeat(10));
        assert!(from_str::<serde_yaml::Value>(&ok).is_ok());
    }

    #[test]
    fn other_errors_keep_their_location_without_repeating_it() {
        let e = from_str::<File>("items:\n  - id: a\n    na: lots\n").unwrap_err();
        assert_eq!(e.location.map(|l| l.0), Some(3));
        assert!(!e.message.contains("at line"), "{}", e.message);
    }
}

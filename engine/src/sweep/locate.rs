//! Where a field of a spec stands in its YAML text: the line and column of
//! a path such as `parameters[2].name` or `outputs.na_at_h[1]`, so that a
//! spec error points at the line to fix. The parser hands the checks plain
//! values without positions; this walks the text by indentation, which is
//! enough for the block style of every bundled spec (a flow value,
//! `[6, 24]` or `{ kind: ... }`, is located at the key that holds it).

/// One step of a field path.
enum Step<'a> {
    Key(&'a str),
    Index(usize),
}

fn steps(field: &str) -> Vec<Step<'_>> {
    let mut out = Vec::new();
    for part in field.split('.') {
        let (key, mut rest) = part.split_once('[').map_or((part, ""), |(k, r)| (k, r));
        if !key.is_empty() {
            out.push(Step::Key(key));
        }
        while let Some((index, after)) = rest.split_once(']') {
            if let Ok(i) = index.parse() {
                out.push(Step::Index(i));
            }
            rest = after.strip_prefix('[').unwrap_or(after);
        }
    }
    out
}

/// The shape of a line: the column (0-based) where its key starts past any
/// `- ` list markers, the first dash's column if it has one, and the text
/// from the key on.
type Shape<'a> = (usize, Option<usize>, &'a str);

/// The shape of a line without its comment (`None`: blank or comment).
fn shape(line: &str) -> Option<Shape<'_>> {
    let body = line.split(" #").next().unwrap_or(line);
    let indent = body.len() - body.trim_start().len();
    let mut rest = body.trim_start();
    if rest.is_empty() || rest.starts_with('#') {
        return None;
    }
    let mut column = indent;
    let mut dash = None;
    while let Some(after) = rest
        .strip_prefix('-')
        .filter(|a| a.is_empty() || a.starts_with(' '))
    {
        dash.get_or_insert(column);
        let trimmed = after.trim_start();
        column += rest.len() - trimmed.len();
        rest = trimmed;
    }
    Some((column, dash, rest))
}

/// Line and column (1-based) of `field` in the spec `text`, where the walk
/// finds it.
pub(super) fn field_position(text: &str, field: &str) -> Option<(usize, usize)> {
    let lines: Vec<&str> = text.lines().collect();
    // The lines of the node being searched, and the column its parent
    // stands at.
    let (mut from, mut to) = (0, lines.len());
    let mut found = None;
    for step in steps(field) {
        let rows: Vec<(usize, Shape)> = (from..to)
            .filter_map(|n| shape(lines[n]).map(|s| (n, s)))
            .collect();
        match step {
            Step::Key(key) => {
                let level = rows.iter().map(|(_, (c, _, _))| *c).min()?;
                let (n, (column, _, rest)) = *rows.iter().find(|(_, (c, _, r))| {
                    *c == level
                        && r.strip_prefix(key)
                            .is_some_and(|a| a.trim_start().starts_with(':'))
                })?;
                found = Some((n + 1, column + 1));
                let inline = !rest[key.len()..].trim_start()[1..].trim().is_empty();
                from = n + 1;
                to = if inline {
                    from
                } else {
                    rows.iter()
                        .find(|(m, (c, _, _))| *m > n && *c <= level)
                        .map_or(to, |(m, _)| *m)
                };
            }
            Step::Index(i) => {
                let level = rows.iter().filter_map(|(_, (_, d, _))| *d).min()?;
                let items: Vec<usize> = rows
                    .iter()
                    .filter(|(_, (_, d, _))| *d == Some(level))
                    .map(|(n, _)| *n)
                    .collect();
                let n = *items.get(i)?;
                found = Some((n + 1, level + 1));
                from = n;
                to = items.get(i + 1).copied().unwrap_or(to);
                // The item's first key shares the line with its dash; the
                // walk below takes keys at the item's content column.
            }
        }
        if from >= to {
            break;
        }
    }
    found
}

#[cfg(test)]
mod tests {
    use super::field_position;

    #[test]
    fn fields_are_found_at_their_line_and_column() {
        let text = "scenario: b.rhai\ndesign: grid\n# a comment\nparameters:\n  - name: gfr_ml_min   # filtration\n    values: [1, 2]\n  - name: patient.na\n    range: [120, 130]\noutputs:\n  na_at_h: [6, 24]\n  band_every_h: 2\nmembers: 5\n";
        let cases = [
            ("design", Some((2, 1))),
            ("parameters[0].name", Some((5, 5))),
            ("parameters[1].name", Some((7, 5))),
            ("parameters[1].range", Some((8, 5))),
            ("parameters[1]", Some((7, 3))),
            ("outputs.na_at_h[1]", Some((10, 3))),
            ("outputs.band_every_h", Some((11, 3))),
            ("members", Some((12, 1))),
            ("levels", None),
            ("parameters[2].name", None),
        ];
        for (field, want) in cases {
            assert_eq!(field_position(text, field), want, "{field}");
        }
    }
}

//! Readings pasted from a spreadsheet or exported by a data logger: text
//! with a header row, separated by tabs, semicolons or commas, with a
//! decimal point or (when the separator is not a comma) a decimal comma.
//!
//! Recognised columns (case-insensitive, in any order): `reference`
//! (reference signal), `uut` (unit-under-test signal), optional `rj_t_c`
//! (reference-junction temperature, °C) and optional `time` (kept as text).

use crate::store::runs::Reading;

/// A problem in the text, with where it is.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("line {line}, column {column}: {message}")]
pub struct ImportError {
    /// 1-based line number.
    pub line: usize,
    /// 1-based column number (0 when the whole line is concerned).
    pub column: usize,
    /// What is wrong and what is allowed.
    pub message: String,
}

fn error(line: usize, column: usize, message: impl Into<String>) -> ImportError {
    ImportError {
        line,
        column,
        message: message.into(),
    }
}

/// Most readings accepted in one block.
pub const MAX_READINGS: usize = 100_000;

/// One reading as parsed from a line, borrowing its time stamp from it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Row<'a> {
    /// Time stamp as written (`None` when the column is absent or empty).
    pub taken_at: Option<&'a str>,
    /// Reference signal.
    pub reference_signal: f64,
    /// Unit-under-test signal.
    pub uut_signal: f64,
    /// Reference-junction temperature, °C.
    pub rj_t_c: Option<f64>,
}

/// The layout read from a header row: separator, decimal sign and where
/// each recognised column is. Reads the lines after the header one at a
/// time, so a file can be parsed as it arrives.
#[derive(Debug, Clone)]
pub struct Layout {
    separator: char,
    decimal_comma: bool,
    names: Vec<String>,
    reference: usize,
    uut: usize,
    rj: Option<usize>,
    time: Option<usize>,
}

impl Layout {
    /// Reads the header row `header` (line `line`).
    ///
    /// # Errors
    /// A header without a `reference` or `uut` column.
    pub fn from_header(line: usize, header: &str) -> Result<Self, ImportError> {
        let header = header.trim_end_matches('\r');
        let separator = if header.contains('\t') {
            '\t'
        } else if header.contains(';') {
            ';'
        } else {
            ','
        };
        let names: Vec<String> = header
            .split(separator)
            .map(|h| h.trim().trim_matches('"').to_ascii_lowercase())
            .collect();
        let find = |wanted: &[&str]| names.iter().position(|n| wanted.contains(&n.as_str()));
        let reference = find(&["reference", "reference_signal", "ref"]).ok_or_else(|| {
            error(
                line,
                0,
                format!("the header row has no `reference` column; it reads {header:?}"),
            )
        })?;
        let uut = find(&["uut", "uut_signal", "unit_under_test"]).ok_or_else(|| {
            error(
                line,
                0,
                format!("the header row has no `uut` column; it reads {header:?}"),
            )
        })?;
        let rj = find(&["rj_t_c", "rj", "reference_junction_t_c"]);
        let time = find(&["time", "timestamp", "taken_at"]);
        Ok(Self {
            separator,
            decimal_comma: separator != ',',
            names,
            reference,
            uut,
            rj,
            time,
        })
    }

    /// Reads one line after the header; `None` for a blank line.
    ///
    /// # Errors
    /// A wrong number of cells or a cell that is not a finite number, with
    /// its line and column.
    pub fn row<'a>(&self, line: usize, text: &'a str) -> Result<Option<Row<'a>>, ImportError> {
        let text = text.trim_end_matches('\r');
        if text.trim().is_empty() {
            return Ok(None);
        }
        let mut cells = [""; MAX_COLUMNS];
        let mut count = 0;
        for cell in text.split(self.separator) {
            if count < MAX_COLUMNS {
                cells[count] = cell.trim().trim_matches('"');
            }
            count += 1;
        }
        if count != self.names.len() || count > MAX_COLUMNS {
            return Err(error(
                line,
                0,
                format!("{count} columns; the header has {}", self.names.len()),
            ));
        }
        let number = |index: usize| -> Result<f64, ImportError> {
            let raw = cells[index];
            let value: Result<f64, _> = if self.decimal_comma && raw.contains(',') {
                raw.replace(',', ".").parse()
            } else {
                raw.parse()
            };
            let value = value.map_err(|_| {
                error(
                    line,
                    index + 1,
                    format!("{raw:?} in column `{}` is not a number", self.names[index]),
                )
            })?;
            if !value.is_finite() {
                return Err(error(
                    line,
                    index + 1,
                    format!(
                        "{raw:?} in column `{}` is not a finite number",
                        self.names[index]
                    ),
                ));
            }
            Ok(value)
        };
        let rj_t_c = match self.rj {
            Some(i) if !cells[i].is_empty() => Some(number(i)?),
            _ => None,
        };
        Ok(Some(Row {
            taken_at: self.time.map(|i| cells[i]).filter(|t| !t.is_empty()),
            reference_signal: number(self.reference)?,
            uut_signal: number(self.uut)?,
            rj_t_c,
        }))
    }
}

/// Most columns a line may have.
pub const MAX_COLUMNS: usize = 64;

/// Parses a block of readings.
///
/// # Errors
/// The first problem found, with its line and column.
pub fn parse(text: &str) -> Result<Vec<Reading>, ImportError> {
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l))
        .filter(|(_, l)| !l.trim().is_empty());
    let (header_line, header) = lines.next().ok_or_else(|| {
        error(
            1,
            0,
            "the text is empty; expected a header row such as `time<TAB>reference<TAB>uut`",
        )
    })?;
    let layout = Layout::from_header(header_line, header)?;
    let mut out = Vec::new();
    for (line, text) in lines {
        let Some(row) = layout.row(line, text)? else {
            continue;
        };
        out.push(Reading {
            position: 0,
            taken_at: row.taken_at.map(str::to_owned),
            reference_signal: row.reference_signal,
            uut_signal: row.uut_signal,
            rj_t_c: row.rj_t_c,
        });
        if out.len() > MAX_READINGS {
            return Err(error(
                line,
                0,
                format!("more than {MAX_READINGS} readings in one block"),
            ));
        }
    }
    if out.is_empty() {
        return Err(error(
            header_line,
            0,
            "the header row is followed by no readings",
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn tab_separated_with_decimal_comma() {
        let text = "time\treference\tuut\trj_t_c\n10:00:00\t100,0123\t4,0961\t22,5\n10:00:10\t100,0131\t4,0962\t22,6\n";
        let r = parse(text).expect("parses");
        assert_eq!(r.len(), 2);
        assert_eq!(r[0].reference_signal, 100.0123);
        assert_eq!(r[1].uut_signal, 4.0962);
        assert_eq!(r[1].rj_t_c, Some(22.6));
        assert_eq!(r[0].taken_at.as_deref(), Some("10:00:00"));
    }

    #[test]
    fn comma_separated_with_decimal_point_in_any_column_order() {
        let r = parse("uut,reference\n1.5,2.5\n").expect("parses");
        assert_eq!((r[0].reference_signal, r[0].uut_signal), (2.5, 1.5));
        assert_eq!(r[0].rj_t_c, None);
    }

    #[test]
    fn errors_name_line_and_column() {
        let e = parse("reference;uut\n1,0;2,0\n1,0;abc\n").expect_err("bad number");
        assert_eq!((e.line, e.column), (3, 2));
        assert!(
            e.to_string()
                .contains("\"abc\" in column `uut` is not a number"),
            "{e}"
        );
        let e = parse("reference,uut\n1.0\n").expect_err("short line");
        assert_eq!(
            e.to_string(),
            "line 2, column 0: 1 columns; the header has 2"
        );
        let e = parse("a,b\n1,2\n").expect_err("no reference column");
        assert!(e.message.contains("no `reference` column"));
        let e = parse("reference,uut\n1.0,NaN\n").expect_err("nan");
        assert!(e.message.contains("not a finite number"));
        assert!(parse("").is_err());
        assert!(parse("reference,uut\n").is_err());
    }

    /// Writes readings as a table: `sep` between cells, decimal commas when asked, the
    /// columns in `order` (0 reference, 1 uut, 2 rj_t_c, 3 time), cells optionally quoted,
    /// lines ended by `eol`. Rust's `Display` of an f64 is the shortest decimal text that
    /// reads back to the same value.
    fn write(
        rows: &[Reading],
        sep: char,
        decimal_comma: bool,
        order: &[usize],
        quoted: bool,
        eol: &str,
    ) -> String {
        let num = |v: f64| {
            let s = v.to_string();
            if decimal_comma {
                s.replace('.', ",")
            } else {
                s
            }
        };
        let cell = |s: String| if quoted { format!("\"{s}\"") } else { s };
        let names = ["reference", "uut", "rj_t_c", "time"];
        let line = |cells: Vec<String>| cells.join(&sep.to_string()) + eol;
        let mut out = line(order.iter().map(|&c| cell(names[c].to_owned())).collect());
        for r in rows {
            out += &line(
                order
                    .iter()
                    .map(|&c| {
                        cell(match c {
                            0 => num(r.reference_signal),
                            1 => num(r.uut_signal),
                            2 => r.rj_t_c.map(num).unwrap_or_default(),
                            _ => r.taken_at.clone().unwrap_or_default(),
                        })
                    })
                    .collect(),
            );
        }
        out
    }

    fn same_numbers(a: &[Reading], b: &[Reading]) -> bool {
        a.len() == b.len()
            && a.iter().zip(b).all(|(x, y)| {
                x.reference_signal.to_bits() == y.reference_signal.to_bits()
                    && x.uut_signal.to_bits() == y.uut_signal.to_bits()
                    && x.rj_t_c.map(f64::to_bits) == y.rj_t_c.map(f64::to_bits)
            })
    }

    fn finite() -> impl Strategy<Value = f64> {
        prop_oneof![
            -1e6f64..1e6,
            proptest::num::f64::NORMAL | proptest::num::f64::SUBNORMAL | proptest::num::f64::ZERO,
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(128))]

        /// Readings written out in any of the accepted layouts (tab, semicolon or comma
        /// separated; decimal comma where the separator is not a comma; any column order;
        /// quoted cells; CRLF line ends) parse back to the same numbers, bit for bit.
        /// Source: the layouts this module's documentation accepts; shortest round-trip
        /// formatting of f64 (Rust `Display`).
        #[test]
        fn written_readings_parse_back(
            values in proptest::collection::vec(
                (finite(), finite(), proptest::option::of(finite()), proptest::option::of("[0-9:]{1,8}")),
                1..20,
            ),
            sep in prop::sample::select(vec!['\t', ';', ',']),
            comma_wanted in any::<bool>(),
            with_rj in any::<bool>(),
            with_time in any::<bool>(),
            quoted in any::<bool>(),
            crlf in any::<bool>(),
            order in Just(vec![0usize, 1, 2, 3]).prop_shuffle(),
        ) {
            let rows: Vec<Reading> = values
                .into_iter()
                .map(|(r, u, rj, time)| Reading {
                    position: 0,
                    taken_at: if with_time { time } else { None },
                    reference_signal: r,
                    uut_signal: u,
                    rj_t_c: if with_rj { rj } else { None },
                })
                .collect();
            let order: Vec<usize> = order
                .into_iter()
                .filter(|&c| c < 2 || (c == 2 && with_rj) || (c == 3 && with_time))
                .collect();
            let text = write(&rows, sep, comma_wanted && sep != ',', &order, quoted, if crlf { "\r\n" } else { "\n" });
            let back = parse(&text).map_err(|e| TestCaseError::fail(format!("{e}\n{text}")))?;
            prop_assert!(same_numbers(&rows, &back), "{}", text);
            let times: Vec<_> = back.iter().map(|r| r.taken_at.clone()).collect();
            let want: Vec<_> = rows.iter().map(|r| r.taken_at.clone()).collect();
            prop_assert_eq!(times, want);
        }

        /// Any text the parser accepts, written out again, parses to the same numbers.
        /// The text is built from number-like cells (signs, digits, decimal points and
        /// commas, exponents, quotes, spaces, empty cells), so that much of it is accepted
        /// and the rest exercises the refusals. Source: the parser's contract in this module
        /// (accepted text is a table of finite numbers); shortest round-trip formatting of
        /// f64.
        #[test]
        fn accepted_text_round_trips(
            (header, sep, columns) in prop::sample::select(vec![
                ("reference,uut", ',', 2usize),
                ("uut;ref;rj", ';', 3),
                ("time\treference\tuut\trj_t_c", '\t', 4),
                ("\"Reference\";\"UUT\"", ';', 2),
            ]),
            lines in proptest::collection::vec(
                proptest::collection::vec(
                    prop_oneof![
                        4 => "( |\")?[-+]?[0-9]{1,4}([.,][0-9]{1,4})?([eE][-+]?[0-9]{1,3})?( |\")?",
                        1 => "[-+0-9.,eE\" ]{0,6}",
                    ],
                    1..5,
                ),
                1..6,
            ),
            crlf in any::<bool>(),
        ) {
            let eol = if crlf { "\r\n" } else { "\n" };
            let mut text = format!("{header}{eol}");
            let mut non_blank = 0;
            for cells in &lines {
                let cells: Vec<&str> = cells.iter().map(String::as_str).cycle().take(columns).collect();
                let line = cells.join(&sep.to_string());
                non_blank += usize::from(!line.trim().is_empty());
                text += &line;
                text += eol;
            }
            if let Ok(rows) = parse(&text) {
                // Blank lines are skipped; every other line is one reading.
                prop_assert_eq!(rows.len(), non_blank);
                prop_assert!(rows.iter().all(|r| r.reference_signal.is_finite() && r.uut_signal.is_finite()));
                let with_rj = rows.iter().any(|r| r.rj_t_c.is_some());
                let order: Vec<usize> = if with_rj { vec![0, 1, 2] } else { vec![0, 1] };
                for (sep, comma) in [(',', false), ('\t', true), (';', false)] {
                    let again = parse(&write(&rows, sep, comma, &order, false, "\n")).unwrap();
                    prop_assert!(same_numbers(&rows, &again), "{:?}", text);
                }
            }
        }
    }
}

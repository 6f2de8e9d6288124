//! Minimal JSON reader for the unit tests only (the crate has no JSON dependency). It reads
//! the reference-data fixtures in `tests/data/`; production code never uses it.

/// A parsed JSON value.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Json {
    Null,
    Bool(bool),
    Num(f64),
    Str(String),
    Arr(Vec<Json>),
    Obj(Vec<(String, Json)>),
}

impl Json {
    /// Parses a complete JSON document; panics with a message on malformed input (tests only).
    pub(super) fn parse(text: &str) -> Json {
        let mut p = Parser {
            s: text.as_bytes(),
            i: 0,
        };
        let v = p.value();
        p.ws();
        assert_eq!(p.i, p.s.len(), "trailing characters in JSON fixture");
        v
    }

    /// Member `key` of an object; panics if absent.
    pub(super) fn get(&self, key: &str) -> &Json {
        match self {
            Json::Obj(m) => m
                .iter()
                .find(|(k, _)| k == key)
                .map(|(_, v)| v)
                .unwrap_or_else(|| panic!("key '{key}' not found")),
            _ => panic!("not an object when looking up '{key}'"),
        }
    }

    /// Member `key` of an object, or `Null` if absent; panics if not an object.
    pub(super) fn get_opt(&self, key: &str) -> &Json {
        static NULL: Json = Json::Null;
        self.obj()
            .iter()
            .find(|(k, _)| k == key)
            .map_or(&NULL, |(_, v)| v)
    }

    /// Number value; panics otherwise.
    pub(super) fn num(&self) -> f64 {
        match self {
            Json::Num(x) => *x,
            other => panic!("not a number: {other:?}"),
        }
    }

    /// String value; panics otherwise.
    pub(super) fn str(&self) -> &str {
        match self {
            Json::Str(s) => s,
            other => panic!("not a string: {other:?}"),
        }
    }

    /// Array items; panics otherwise.
    pub(super) fn arr(&self) -> &[Json] {
        match self {
            Json::Arr(a) => a,
            other => panic!("not an array: {other:?}"),
        }
    }

    /// Object members in file order; panics otherwise.
    pub(super) fn obj(&self) -> &[(String, Json)] {
        match self {
            Json::Obj(m) => m,
            other => panic!("not an object: {other:?}"),
        }
    }

    /// Array of numbers as a vector.
    pub(super) fn nums(&self) -> Vec<f64> {
        self.arr().iter().map(Json::num).collect()
    }

    /// True for `null`.
    pub(super) fn is_null(&self) -> bool {
        matches!(self, Json::Null)
    }
}

struct Parser<'a> {
    s: &'a [u8],
    i: usize,
}

impl Parser<'_> {
    fn ws(&mut self) {
        while self.i < self.s.len() && self.s[self.i].is_ascii_whitespace() {
            self.i += 1;
        }
    }

    fn eat(&mut self, b: u8) {
        self.ws();
        assert_eq!(
            self.s[self.i], b,
            "expected '{}' at byte {}",
            b as char, self.i
        );
        self.i += 1;
    }

    fn value(&mut self) -> Json {
        self.ws();
        match self.s[self.i] {
            b'{' => {
                self.i += 1;
                let mut m = Vec::new();
                self.ws();
                if self.s[self.i] == b'}' {
                    self.i += 1;
                    return Json::Obj(m);
                }
                loop {
                    self.ws();
                    let k = self.string();
                    self.eat(b':');
                    let v = self.value();
                    m.push((k, v));
                    self.ws();
                    let c = self.s[self.i];
                    self.i += 1;
                    match c {
                        b',' => continue,
                        b'}' => return Json::Obj(m),
                        _ => panic!("bad object at byte {}", self.i),
                    }
                }
            }
            b'[' => {
                self.i += 1;
                let mut a = Vec::new();
                self.ws();
                if self.s[self.i] == b']' {
                    self.i += 1;
                    return Json::Arr(a);
                }
                loop {
                    a.push(self.value());
                    self.ws();
                    let c = self.s[self.i];
                    self.i += 1;
                    match c {
                        b',' => continue,
                        b']' => return Json::Arr(a),
                        _ => panic!("bad array at byte {}", self.i),
                    }
                }
            }
            b'"' => Json::Str(self.string()),
            b't' => self.word("true", Json::Bool(true)),
            b'f' => self.word("false", Json::Bool(false)),
            b'n' => self.word("null", Json::Null),
            _ => {
                let start = self.i;
                while self.i < self.s.len() && b"+-.0123456789eE".contains(&self.s[self.i]) {
                    self.i += 1;
                }
                let text = std::str::from_utf8(&self.s[start..self.i]).expect("ascii number");
                Json::Num(
                    text.parse()
                        .unwrap_or_else(|_| panic!("bad number '{text}'")),
                )
            }
        }
    }

    fn word(&mut self, w: &str, v: Json) -> Json {
        assert!(self.s[self.i..].starts_with(w.as_bytes()), "bad literal");
        self.i += w.len();
        v
    }

    fn string(&mut self) -> String {
        assert_eq!(self.s[self.i], b'"', "expected string at byte {}", self.i);
        self.i += 1;
        let mut out = Vec::new();
        while self.s[self.i] != b'"' {
            if self.s[self.i] == b'\\' {
                self.i += 1;
                match self.s[self.i] {
                    b'n' => out.push(b'\n'),
                    b't' => out.push(b'\t'),
                    b'u' => {
                        let hex = std::str::from_utf8(&self.s[self.i + 1..self.i + 5]).unwrap();
                        let c = char::from_u32(u32::from_str_radix(hex, 16).unwrap()).unwrap();
                        let mut buf = [0u8; 4];
                        out.extend_from_slice(c.encode_utf8(&mut buf).as_bytes());
                        self.i += 4;
                    }
                    other => out.push(other),
                }
            } else {
                out.push(self.s[self.i]);
            }
            self.i += 1;
        }
        self.i += 1;
        String::from_utf8(out).expect("utf-8 string")
    }
}

/// Number of decimals of a printed number such as 0.02 (2) or -0.0005 (4); used to widen a
/// printed band by half a unit of its last digit.
pub(super) fn printed_decimals(v: f64) -> i32 {
    (0..12)
        .find(|&k| {
            let scaled = v * 10f64.powi(k);
            (scaled - scaled.round()).abs() < 1e-6
        })
        .unwrap_or(12)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_nested_values() {
        let j =
            Json::parse(r#"{"a": [1, -0.176004136860E-01, "x\"y"], "b": {"c": null, "d": true}}"#);
        assert_eq!(j.get("a").arr()[0].num(), 1.0);
        assert_eq!(j.get("a").arr()[1].num(), -0.176004136860E-01);
        assert_eq!(j.get("a").arr()[2].str(), "x\"y");
        assert!(j.get("b").get("c").is_null());
        assert_eq!(j.get("b").get("d"), &Json::Bool(true));
    }

    #[test]
    fn counts_printed_decimals() {
        assert_eq!(printed_decimals(0.02), 2);
        assert_eq!(printed_decimals(-0.0005), 4);
        assert_eq!(printed_decimals(0.13), 2);
        assert_eq!(printed_decimals(3.0), 0);
    }
}

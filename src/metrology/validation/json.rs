//! Minimal JSON reader for the embedded reference data (the numerical core has no
//! serialisation dependency). Reads RFC 8259 text, except that a \u escape of a UTF-16
//! surrogate becomes U+FFFD; errors are returned, never panics.

/// Minimal JSON value (enough for the reference data: RFC 8259 without surrogate pairs).
#[derive(Debug, Clone, PartialEq)]
pub(super) enum Json {
    /// `null`.
    Null,
    /// `true` or `false`.
    Bool(bool),
    /// A finite number.
    Num(f64),
    /// A string.
    Str(String),
    /// An array.
    Arr(Vec<Json>),
    /// An object, members in text order.
    Obj(Vec<(String, Json)>),
}

/// Deepest nesting accepted by the reader.
const JSON_MAX_DEPTH: usize = 64;

impl Json {
    /// Reads one JSON value from `text` (surrounding blanks allowed, nothing else).
    pub(super) fn parse(text: &str) -> Result<Json, String> {
        let mut p = JsonReader {
            s: text.as_bytes(),
            i: 0,
        };
        let v = p.value(0)?;
        p.blank();
        if p.i != p.s.len() {
            return Err(p.error("trailing characters"));
        }
        Ok(v)
    }

    /// Member `key` of an object.
    pub(super) fn get(&self, key: &str) -> Result<&Json, String> {
        match self {
            Json::Obj(members) => members
                .iter()
                .find(|(k, _)| k == key)
                .map(|(_, v)| v)
                .ok_or_else(|| format!("missing key \"{key}\"")),
            _ => Err(format!("not an object (looking for \"{key}\")")),
        }
    }

    /// Member reached through nested objects, e.g. `["results", "y1_C"]`.
    pub(super) fn path(&self, keys: &[&str]) -> Result<&Json, String> {
        keys.iter().try_fold(self, |j, k| j.get(k))
    }

    /// The number held.
    pub(super) fn num(&self) -> Result<f64, String> {
        match self {
            Json::Num(v) => Ok(*v),
            other => Err(format!("expected a number, found {}", other.kind())),
        }
    }

    /// The string held.
    pub(super) fn str(&self) -> Result<&str, String> {
        match self {
            Json::Str(s) => Ok(s),
            other => Err(format!("expected a string, found {}", other.kind())),
        }
    }

    /// The elements of an array.
    pub(super) fn arr(&self) -> Result<&[Json], String> {
        match self {
            Json::Arr(v) => Ok(v),
            other => Err(format!("expected an array, found {}", other.kind())),
        }
    }

    /// Whether the value is `null`.
    pub(super) fn is_null(&self) -> bool {
        matches!(self, Json::Null)
    }

    fn kind(&self) -> &'static str {
        match self {
            Json::Null => "null",
            Json::Bool(_) => "a boolean",
            Json::Num(_) => "a number",
            Json::Str(_) => "a string",
            Json::Arr(_) => "an array",
            Json::Obj(_) => "an object",
        }
    }
}

struct JsonReader<'a> {
    s: &'a [u8],
    i: usize,
}

impl JsonReader<'_> {
    fn error(&self, what: &str) -> String {
        format!("JSON: {what} at byte {}", self.i)
    }

    fn blank(&mut self) {
        while self.s.get(self.i).is_some_and(u8::is_ascii_whitespace) {
            self.i += 1;
        }
    }

    fn eat(&mut self, c: u8) -> bool {
        self.blank();
        if self.s.get(self.i) == Some(&c) {
            self.i += 1;
            true
        } else {
            false
        }
    }

    fn value(&mut self, depth: usize) -> Result<Json, String> {
        if depth > JSON_MAX_DEPTH {
            return Err(self.error("nesting too deep"));
        }
        self.blank();
        match self.s.get(self.i) {
            Some(b'{') => {
                self.i += 1;
                let mut members = Vec::new();
                if self.eat(b'}') {
                    return Ok(Json::Obj(members));
                }
                loop {
                    self.blank();
                    let key = self.string()?;
                    if !self.eat(b':') {
                        return Err(self.error("expected ':'"));
                    }
                    members.push((key, self.value(depth + 1)?));
                    if self.eat(b'}') {
                        return Ok(Json::Obj(members));
                    }
                    if !self.eat(b',') {
                        return Err(self.error("expected ',' or '}'"));
                    }
                }
            }
            Some(b'[') => {
                self.i += 1;
                let mut items = Vec::new();
                if self.eat(b']') {
                    return Ok(Json::Arr(items));
                }
                loop {
                    items.push(self.value(depth + 1)?);
                    if self.eat(b']') {
                        return Ok(Json::Arr(items));
                    }
                    if !self.eat(b',') {
                        return Err(self.error("expected ',' or ']'"));
                    }
                }
            }
            Some(b'"') => self.string().map(Json::Str),
            Some(b't') => self.literal("true", Json::Bool(true)),
            Some(b'f') => self.literal("false", Json::Bool(false)),
            Some(b'n') => self.literal("null", Json::Null),
            Some(c) if *c == b'-' || c.is_ascii_digit() => {
                let start = self.i;
                while self
                    .s
                    .get(self.i)
                    .is_some_and(|c| c.is_ascii_digit() || b"+-.eE".contains(c))
                {
                    self.i += 1;
                }
                std::str::from_utf8(&self.s[start..self.i])
                    .ok()
                    .and_then(|t| t.parse::<f64>().ok())
                    .filter(|v| v.is_finite())
                    .map(Json::Num)
                    .ok_or_else(|| self.error("malformed number"))
            }
            Some(_) => Err(self.error("unexpected character")),
            None => Err(self.error("unexpected end")),
        }
    }

    fn literal(&mut self, word: &str, v: Json) -> Result<Json, String> {
        if self.s[self.i..].starts_with(word.as_bytes()) {
            self.i += word.len();
            Ok(v)
        } else {
            Err(self.error("unknown literal"))
        }
    }

    fn string(&mut self) -> Result<String, String> {
        if self.s.get(self.i) != Some(&b'"') {
            return Err(self.error("expected a string"));
        }
        self.i += 1;
        let mut bytes = Vec::new();
        loop {
            let Some(&c) = self.s.get(self.i) else {
                return Err(self.error("unterminated string"));
            };
            self.i += 1;
            match c {
                b'"' => break,
                b'\\' => {
                    let Some(&e) = self.s.get(self.i) else {
                        return Err(self.error("unterminated escape"));
                    };
                    self.i += 1;
                    let ch = match e {
                        b'"' => '"',
                        b'\\' => '\\',
                        b'/' => '/',
                        b'b' => '\u{8}',
                        b'f' => '\u{c}',
                        b'n' => '\n',
                        b'r' => '\r',
                        b't' => '\t',
                        b'u' => {
                            let hex = self
                                .s
                                .get(self.i..self.i + 4)
                                .and_then(|h| std::str::from_utf8(h).ok())
                                .and_then(|h| u32::from_str_radix(h, 16).ok())
                                .ok_or_else(|| self.error("bad \\u escape"))?;
                            self.i += 4;
                            char::from_u32(hex).unwrap_or('\u{fffd}')
                        }
                        _ => return Err(self.error("unknown escape")),
                    };
                    let mut buf = [0u8; 4];
                    bytes.extend_from_slice(ch.encode_utf8(&mut buf).as_bytes());
                }
                _ => bytes.push(c),
            }
        }
        String::from_utf8(bytes).map_err(|_| self.error("invalid UTF-8 in string"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_reader() {
        let j =
            Json::parse(r#" {"a": [1, -2.5e-3, true, null], "b": {"c": "x\"\u00b0y"}} "#).unwrap();
        assert_eq!(j.path(&["b", "c"]).unwrap().str().unwrap(), "x\"°y");
        let a = j.get("a").unwrap().arr().unwrap();
        assert_eq!(a[1].num().unwrap(), -2.5e-3);
        assert_eq!(a[2], Json::Bool(true));
        assert!(a[3].is_null());
        assert!(j.get("missing").is_err());
        assert!(a[0].str().is_err());
        for bad in [
            "",
            "{",
            "[1,]",
            "{\"a\" 1}",
            "tru",
            "1 2",
            "\"abc",
            "[1e999]",
            "{\"a\":-}",
        ] {
            assert!(Json::parse(bad).is_err(), "{bad}");
        }
        let deep = "[".repeat(100) + &"]".repeat(100);
        assert!(Json::parse(&deep).is_err());
    }
}

//! A parser for the tiny subset of Python literal syntax that a `.npy` header uses: a dict of
//! strings, booleans, integers and tuples. Written by hand so that a header is only ever
//! *parsed*, never evaluated, and so malformed headers fail with a message instead of a panic.

/// A Python literal value.
#[derive(Debug, Clone, PartialEq)]
pub enum Literal {
    Str(String),
    Bool(bool),
    Int(u64),
    None,
    /// Tuple or list.
    Seq(Vec<Literal>),
    Dict(Vec<(String, Literal)>),
}

/// Parses one literal occupying all of `text` (surrounding whitespace allowed).
pub fn parse(text: &str) -> Result<Literal, String> {
    let mut p = Parser {
        s: text.as_bytes(),
        i: 0,
    };
    let v = p.value(0)?;
    p.skip_ws();
    if p.i != p.s.len() {
        return Err(format!(
            "unexpected text after the header dict at byte {}",
            p.i
        ));
    }
    Ok(v)
}

struct Parser<'a> {
    s: &'a [u8],
    i: usize,
}

/// Nesting deeper than this is not a numpy header; refusing it bounds the recursion.
const MAX_DEPTH: usize = 16;

impl Parser<'_> {
    fn skip_ws(&mut self) {
        while self.i < self.s.len() && self.s[self.i].is_ascii_whitespace() {
            self.i += 1;
        }
    }

    fn peek(&mut self) -> Option<u8> {
        self.skip_ws();
        self.s.get(self.i).copied()
    }

    fn expect(&mut self, c: u8) -> Result<(), String> {
        if self.peek() == Some(c) {
            self.i += 1;
            Ok(())
        } else {
            Err(format!("expected '{}' at byte {}", c as char, self.i))
        }
    }

    fn value(&mut self, depth: usize) -> Result<Literal, String> {
        if depth > MAX_DEPTH {
            return Err("header nests too deeply".into());
        }
        match self.peek() {
            Some(b'{') => self.dict(depth),
            Some(b'(') => self.seq(b')', depth),
            Some(b'[') => self.seq(b']', depth),
            Some(b'\'') | Some(b'"') => self.string().map(Literal::Str),
            Some(c) if c.is_ascii_digit() => self.int(),
            Some(c) if c.is_ascii_alphabetic() => self.word(),
            Some(c) => Err(format!(
                "unexpected character '{}' at byte {}",
                c as char, self.i
            )),
            None => Err("header ends early".into()),
        }
    }

    fn dict(&mut self, depth: usize) -> Result<Literal, String> {
        self.expect(b'{')?;
        let mut items = Vec::new();
        loop {
            if self.peek() == Some(b'}') {
                self.i += 1;
                return Ok(Literal::Dict(items));
            }
            let key = match self.value(depth + 1)? {
                Literal::Str(k) => k,
                other => return Err(format!("dict key is not a string: {other:?}")),
            };
            self.expect(b':')?;
            let v = self.value(depth + 1)?;
            items.push((key, v));
            match self.peek() {
                Some(b',') => self.i += 1,
                Some(b'}') => {}
                _ => return Err(format!("expected ',' or '}}' at byte {}", self.i)),
            }
        }
    }

    fn seq(&mut self, close: u8, depth: usize) -> Result<Literal, String> {
        self.i += 1;
        let mut items = Vec::new();
        loop {
            if self.peek() == Some(close) {
                self.i += 1;
                return Ok(Literal::Seq(items));
            }
            items.push(self.value(depth + 1)?);
            match self.peek() {
                Some(b',') => self.i += 1,
                Some(c) if c == close => {}
                _ => {
                    return Err(format!(
                        "expected ',' or '{}' at byte {}",
                        close as char, self.i
                    ));
                }
            }
        }
    }

    fn string(&mut self) -> Result<String, String> {
        let quote = self.s[self.i];
        self.i += 1;
        let start = self.i;
        while self.i < self.s.len() && self.s[self.i] != quote {
            if self.s[self.i] == b'\\' {
                return Err("escape sequences are not expected in a .npy header".into());
            }
            self.i += 1;
        }
        if self.i >= self.s.len() {
            return Err("unterminated string in header".into());
        }
        let text = std::str::from_utf8(&self.s[start..self.i])
            .map_err(|_| "header string is not UTF-8".to_string())?;
        self.i += 1;
        Ok(text.to_string())
    }

    fn int(&mut self) -> Result<Literal, String> {
        let start = self.i;
        while self.i < self.s.len() && self.s[self.i].is_ascii_digit() {
            self.i += 1;
        }
        let digits = std::str::from_utf8(&self.s[start..self.i]).map_err(|e| e.to_string())?;
        // Python 2 wrote long integers with an `L` suffix.
        if self.s.get(self.i) == Some(&b'L') {
            self.i += 1;
        }
        digits
            .parse::<u64>()
            .map(Literal::Int)
            .map_err(|_| format!("integer {digits} is too large"))
    }

    fn word(&mut self) -> Result<Literal, String> {
        let start = self.i;
        while self.i < self.s.len() && self.s[self.i].is_ascii_alphanumeric() {
            self.i += 1;
        }
        match &self.s[start..self.i] {
            b"True" => Ok(Literal::Bool(true)),
            b"False" => Ok(Literal::Bool(false)),
            b"None" => Ok(Literal::None),
            w => Err(format!(
                "unexpected word '{}' in header",
                String::from_utf8_lossy(w)
            )),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_a_numpy_header() {
        // The header text numpy 1.x/2.x writes for np.zeros((3, 4), '<f4') (from memory).
        let v = parse("{'descr': '<f4', 'fortran_order': False, 'shape': (3, 4), }   \n").unwrap();
        assert_eq!(
            v,
            Literal::Dict(vec![
                ("descr".into(), Literal::Str("<f4".into())),
                ("fortran_order".into(), Literal::Bool(false)),
                (
                    "shape".into(),
                    Literal::Seq(vec![Literal::Int(3), Literal::Int(4)])
                ),
            ])
        );
        assert!(parse("{'shape': (99999999999999999999999,)}").is_err());
        assert!(parse("{'a': __import__('os')}").is_err());
        assert!(parse(&"[".repeat(100)).is_err());
    }
}

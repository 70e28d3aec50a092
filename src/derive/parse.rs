//! Text to syntax tree for derived-column expressions, with the byte span of every part
//! so that an error can point at the character at fault.
//!
//! Grammar (lowest precedence first; binary operators are left-associative):
//!
//! ```text
//! sum     = product (("+" | "-") product)*
//! product = unary (("*" | "/") unary)*
//! unary   = "-" unary | primary
//! primary = number | name | function "(" sum ("," sum)* ")" | "(" sum ")"
//! number  = digits ["." digits] [("e" | "E") ["+" | "-"] digits]   (or "." digits ...)
//! name    = [A-Za-z_][A-Za-z0-9_]*  |  '"' any text, '""' for one '"' '"'
//! ```
//!
//! A bare name directly followed by `(` is a function call; anything else is a column.
//! What it is not: name resolution (does the column exist?) and evaluation, which live in
//! [`super::eval`].

use std::fmt;

/// Byte offsets into the expression text, `start..end`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Span {
    pub start: usize,
    pub end: usize,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Expr {
    pub kind: ExprKind,
    pub span: Span,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Op {
    Add,
    Sub,
    Mul,
    Div,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Func {
    Abs,
    /// Natural logarithm.
    Log,
    Log10,
    Sqrt,
    Exp,
    Min,
    Max,
    /// Hour of the day of a date-time column, as written (13:30 is 13.5).
    Hour,
    /// Day of the year of a date-time column, as written (1 January is 1).
    Doy,
    /// Seconds since 1970-01-01 00:00 UTC of a date-time column.
    Time,
}

pub const FUNCTIONS: &str = "abs, log, log10, sqrt, exp, min(a, b), max(a, b), hour(t), doy(t), time(t)";

impl Func {
    fn from_name(name: &str) -> Option<Func> {
        Some(match name {
            "abs" => Func::Abs,
            "log" => Func::Log,
            "log10" => Func::Log10,
            "sqrt" => Func::Sqrt,
            "exp" => Func::Exp,
            "min" => Func::Min,
            "max" => Func::Max,
            "hour" => Func::Hour,
            "doy" => Func::Doy,
            "time" => Func::Time,
            _ => return None,
        })
    }

    pub fn name(self) -> &'static str {
        match self {
            Func::Abs => "abs",
            Func::Log => "log",
            Func::Log10 => "log10",
            Func::Sqrt => "sqrt",
            Func::Exp => "exp",
            Func::Min => "min",
            Func::Max => "max",
            Func::Hour => "hour",
            Func::Doy => "doy",
            Func::Time => "time",
        }
    }

    pub fn arity(self) -> usize {
        match self {
            Func::Min | Func::Max => 2,
            _ => 1,
        }
    }

    /// Reads a date-time column by name rather than numbers.
    pub fn reads_time(self) -> bool {
        matches!(self, Func::Hour | Func::Doy | Func::Time)
    }
}

#[derive(Debug, Clone, PartialEq)]
pub enum ExprKind {
    Number(f64),
    Column(String),
    Neg(Box<Expr>),
    Binary(Op, Box<Expr>, Box<Expr>),
    Call(Func, Vec<Expr>),
}

/// An error at a place in the expression.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ExprError {
    pub span: Span,
    pub message: String,
}

impl ExprError {
    pub fn new(span: Span, message: impl Into<String>) -> Self {
        ExprError { span, message: message.into() }
    }

    /// The expression, then a line of carets under the part at fault and the message:
    ///
    /// ```text
    /// water - modl
    ///         ^^^^ no column named 'modl'
    /// ```
    /// Carets are placed by characters, not bytes, so names with accents line up.
    pub fn render(&self, text: &str) -> String {
        let start = self.span.start.min(text.len());
        let end = self.span.end.clamp(start, text.len());
        let pad = text[..start].chars().count();
        let width = text[start..end].chars().count().max(1);
        format!("{text}\n{}{} {}", " ".repeat(pad), "^".repeat(width), self.message)
    }
}

impl fmt::Display for ExprError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "at character {}: {}", self.span.start + 1, self.message)
    }
}

#[derive(Debug, Clone, PartialEq)]
enum Tok {
    Num(f64),
    Ident(String),
    Quoted(String),
    Plus,
    Minus,
    Star,
    Slash,
    LParen,
    RParen,
    Comma,
    End,
}

fn describe(t: &Tok) -> String {
    match t {
        Tok::Num(_) => "a number".into(),
        Tok::Ident(s) => format!("'{s}'"),
        Tok::Quoted(s) => format!("\"{s}\""),
        Tok::Plus => "'+'".into(),
        Tok::Minus => "'-'".into(),
        Tok::Star => "'*'".into(),
        Tok::Slash => "'/'".into(),
        Tok::LParen => "'('".into(),
        Tok::RParen => "')'".into(),
        Tok::Comma => "','".into(),
        Tok::End => "the end".into(),
    }
}

fn lex(text: &str) -> Result<Vec<(Tok, Span)>, ExprError> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        let start = i;
        let single = match c {
            b' ' | b'\t' | b'\n' | b'\r' => {
                i += 1;
                continue;
            }
            b'+' => Some(Tok::Plus),
            b'-' => Some(Tok::Minus),
            b'*' => Some(Tok::Star),
            b'/' => Some(Tok::Slash),
            b'(' => Some(Tok::LParen),
            b')' => Some(Tok::RParen),
            b',' => Some(Tok::Comma),
            _ => None,
        };
        if let Some(t) = single {
            i += 1;
            out.push((t, Span { start, end: i }));
            continue;
        }
        if c.is_ascii_digit() || (c == b'.' && b.get(i + 1).is_some_and(u8::is_ascii_digit)) {
            while i < b.len() && b[i].is_ascii_digit() {
                i += 1;
            }
            if i < b.len() && b[i] == b'.' {
                i += 1;
                while i < b.len() && b[i].is_ascii_digit() {
                    i += 1;
                }
            }
            if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
                let e = i;
                i += 1;
                if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
                    i += 1;
                }
                let d = i;
                while i < b.len() && b[i].is_ascii_digit() {
                    i += 1;
                }
                if i == d {
                    return Err(ExprError::new(Span { start: e, end: i.max(e + 1) }, "expected digits after the exponent 'e', as in 1e-3"));
                }
            }
            if i < b.len() && (b[i].is_ascii_alphabetic() || b[i] == b'_') {
                return Err(ExprError::new(
                    Span { start, end: i + 1 },
                    "a number runs into a name; put an operator between them, or quote a name that starts with a digit",
                ));
            }
            let v: f64 = text[start..i].parse().map_err(|_| ExprError::new(Span { start, end: i }, "not a number"))?;
            out.push((Tok::Num(v), Span { start, end: i }));
            continue;
        }
        if c.is_ascii_alphabetic() || c == b'_' {
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
                i += 1;
            }
            out.push((Tok::Ident(text[start..i].to_string()), Span { start, end: i }));
            continue;
        }
        if c == b'"' {
            let mut name = String::new();
            i += 1;
            loop {
                match text[i..].find('"') {
                    None => return Err(ExprError::new(Span { start, end: start + 1 }, "this quoted name has no closing '\"'")),
                    Some(k) => {
                        name.push_str(&text[i..i + k]);
                        i += k + 1;
                        if b.get(i) == Some(&b'"') {
                            name.push('"');
                            i += 1;
                        } else {
                            break;
                        }
                    }
                }
            }
            if name.is_empty() {
                return Err(ExprError::new(Span { start, end: i }, "a quoted name cannot be empty"));
            }
            out.push((Tok::Quoted(name), Span { start, end: i }));
            continue;
        }
        let ch = text[i..].chars().next().expect("inside the text");
        let end = i + ch.len_utf8();
        return Err(ExprError::new(
            Span { start, end },
            format!("unexpected character '{ch}'; expected a column name, a number, an operator (+ - * /) or a parenthesis; quote names with other characters: \"a name\""),
        ));
    }
    out.push((Tok::End, Span { start: b.len(), end: b.len() }));
    Ok(out)
}

struct Parser {
    toks: Vec<(Tok, Span)>,
    at: usize,
}

impl Parser {
    fn peek(&self) -> &(Tok, Span) {
        &self.toks[self.at]
    }

    fn bump(&mut self) -> (Tok, Span) {
        let t = self.toks[self.at].clone();
        if self.at + 1 < self.toks.len() {
            self.at += 1;
        }
        t
    }

    fn sum(&mut self) -> Result<Expr, ExprError> {
        let mut left = self.product()?;
        loop {
            let op = match self.peek().0 {
                Tok::Plus => Op::Add,
                Tok::Minus => Op::Sub,
                _ => return Ok(left),
            };
            self.bump();
            let right = self.product()?;
            let span = Span { start: left.span.start, end: right.span.end };
            left = Expr { kind: ExprKind::Binary(op, Box::new(left), Box::new(right)), span };
        }
    }

    fn product(&mut self) -> Result<Expr, ExprError> {
        let mut left = self.unary()?;
        loop {
            let op = match self.peek().0 {
                Tok::Star => Op::Mul,
                Tok::Slash => Op::Div,
                _ => return Ok(left),
            };
            self.bump();
            let right = self.unary()?;
            let span = Span { start: left.span.start, end: right.span.end };
            left = Expr { kind: ExprKind::Binary(op, Box::new(left), Box::new(right)), span };
        }
    }

    fn unary(&mut self) -> Result<Expr, ExprError> {
        if self.peek().0 == Tok::Minus {
            let (_, s) = self.bump();
            let inner = self.unary()?;
            let span = Span { start: s.start, end: inner.span.end };
            return Ok(Expr { kind: ExprKind::Neg(Box::new(inner)), span });
        }
        self.primary()
    }

    fn primary(&mut self) -> Result<Expr, ExprError> {
        let (tok, span) = self.bump();
        match tok {
            Tok::Num(v) => Ok(Expr { kind: ExprKind::Number(v), span }),
            Tok::Quoted(name) => Ok(Expr { kind: ExprKind::Column(name), span }),
            Tok::Ident(name) => {
                if self.peek().0 != Tok::LParen {
                    return Ok(Expr { kind: ExprKind::Column(name), span });
                }
                let f = Func::from_name(&name).ok_or_else(|| {
                    ExprError::new(span, format!("no function named '{name}'; the functions are {FUNCTIONS} (quote a column name: \"{name}\")"))
                })?;
                let (_, open) = self.bump();
                let mut args = vec![self.sum()?];
                while self.peek().0 == Tok::Comma {
                    self.bump();
                    args.push(self.sum()?);
                }
                let (close, cspan) = self.bump();
                if close != Tok::RParen {
                    return Err(ExprError::new(
                        cspan,
                        format!("expected ',' or ')' to close the '(' at character {}, found {}", open.start + 1, describe(&close)),
                    ));
                }
                let whole = Span { start: span.start, end: cspan.end };
                if args.len() != f.arity() {
                    let want = if f.arity() == 1 { "1 argument".to_string() } else { format!("{} arguments", f.arity()) };
                    return Err(ExprError::new(whole, format!("{}() takes {want}, got {}", f.name(), args.len())));
                }
                Ok(Expr { kind: ExprKind::Call(f, args), span: whole })
            }
            Tok::LParen => {
                let inner = self.sum()?;
                let (close, cspan) = self.bump();
                if close != Tok::RParen {
                    return Err(ExprError::new(
                        cspan,
                        format!("expected ')' to close the '(' at character {}, found {}", span.start + 1, describe(&close)),
                    ));
                }
                Ok(Expr { kind: inner.kind, span: Span { start: span.start, end: cspan.end } })
            }
            other => Err(ExprError::new(
                span,
                format!("expected a column name, a number, '(' or '-', found {}", describe(&other)),
            )),
        }
    }
}

/// Parses a whole expression.
pub fn parse(text: &str) -> Result<Expr, ExprError> {
    let mut p = Parser { toks: lex(text)?, at: 0 };
    let e = p.sum()?;
    let (t, span) = p.bump();
    if t != Tok::End {
        return Err(ExprError::new(span, format!("expected an operator (+ - * /) or the end, found {}", describe(&t))));
    }
    Ok(e)
}

impl Expr {
    /// Every column name the expression reads, with its span, in order of appearance.
    pub fn columns(&self) -> Vec<(&str, Span)> {
        let mut out = Vec::new();
        self.walk(&mut |e| {
            if let ExprKind::Column(n) = &e.kind {
                out.push((n.as_str(), e.span));
            }
        });
        out
    }

    fn walk<'a>(&'a self, f: &mut dyn FnMut(&'a Expr)) {
        f(self);
        match &self.kind {
            ExprKind::Neg(a) => a.walk(f),
            ExprKind::Binary(_, a, b) => {
                a.walk(f);
                b.walk(f);
            }
            ExprKind::Call(_, args) => args.iter().for_each(|a| a.walk(f)),
            _ => {}
        }
    }
}

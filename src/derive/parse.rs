//! Text to syntax tree for derived-column expressions and row conditions (one parser for
//! both: a row condition is an expression of the same language with comparisons, `and`,
//! `or`, `not` and `in` above it), with the byte span of every part so that an error can
//! point at the character at fault.
//!
//! Grammar (lowest precedence first; binary operators are left-associative):
//!
//! ```text
//! condition  = conjunct ("or" conjunct)*                       (row conditions only)
//! conjunct   = negation ("and" negation)*
//! negation   = "not" negation | comparison
//! comparison = sum [compare sum | ["not"] "in" "(" sum ("," sum)* ")"]
//! compare    = "<" | "<=" | "==" | "!=" | ">=" | ">"
//! sum        = product (("+" | "-") product)*
//! product    = unary (("*" | "/") unary)*
//! unary      = "-" unary | primary
//! primary    = number | name | text | function "(" sum ("," sum)* ")" | "(" inner ")"
//! number     = digits ["." digits] [("e" | "E") ["+" | "-"] digits]   (or "." digits ...)
//! name       = [A-Za-z_][A-Za-z0-9_]*  |  '"' any text, '""' for one '"' '"'
//! text       = "'" any text, "''" for one "'" "'"                   (row conditions only)
//! ```
//!
//! `inner` is `sum` in an expression and `condition` in a row condition. A bare name
//! directly followed by `(` is a function call; anything else is a column. In a row
//! condition `and`, `or`, `not` and `in` are words of the language (quote a column of that
//! name), and a comparison compares two things at a time (`a < b < c` is refused, with a
//! hint). Python's precedence, and SQL's: `not a == b` is `not (a == b)`, `and` binds
//! tighter than `or`.
//!
//! Double quotes name a column in an expression, as before conditions existed. In a row
//! condition a double-quoted text is kept as [`ExprKind::Quoted`]: it is a value (a level
//! of a text column, a date-time) where it stands in an `in (...)` list or faces a text or
//! date-time column, and a column name anywhere else; single quotes always make a value.
//! That choice needs the columns, so it is made in [`super::condition`].
//!
//! What it is not: name resolution (does the column exist?) and evaluation, which live in
//! [`super::eval`] and [`super::condition`].

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

/// A comparison of two values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Cmp {
    Lt,
    Le,
    Eq,
    Ne,
    Ge,
    Gt,
}

impl Cmp {
    pub fn symbol(self) -> &'static str {
        match self {
            Cmp::Lt => "<",
            Cmp::Le => "<=",
            Cmp::Eq => "==",
            Cmp::Ne => "!=",
            Cmp::Ge => ">=",
            Cmp::Gt => ">",
        }
    }

    /// Whether it asks for an order (text values have none).
    pub fn is_order(self) -> bool {
        !matches!(self, Cmp::Eq | Cmp::Ne)
    }

    /// `a op b` for two present numbers.
    pub fn holds(self, a: f64, b: f64) -> bool {
        match self {
            Cmp::Lt => a < b,
            Cmp::Le => a <= b,
            Cmp::Eq => a == b,
            Cmp::Ne => a != b,
            Cmp::Ge => a >= b,
            Cmp::Gt => a > b,
        }
    }

    /// The same comparison with its sides swapped: `a op b` is `b op.flipped() a`.
    pub fn flipped(self) -> Cmp {
        match self {
            Cmp::Lt => Cmp::Gt,
            Cmp::Le => Cmp::Ge,
            Cmp::Ge => Cmp::Le,
            Cmp::Gt => Cmp::Lt,
            c => c,
        }
    }
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

/// The words of the condition language.
pub const CONDITION_WORDS: [&str; 4] = ["and", "or", "not", "in"];

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
    /// A column, by a bare name (or, in an expression, a double-quoted one).
    Column(String),
    /// A double-quoted text in a row condition: a column name or a value, told apart by
    /// where it stands (see the module comment).
    Quoted(String),
    /// A single-quoted text in a row condition: always a value.
    Text(String),
    Neg(Box<Expr>),
    Binary(Op, Box<Expr>, Box<Expr>),
    Call(Func, Vec<Expr>),
    /// `a op b` (row conditions).
    Compare(Cmp, Box<Expr>, Box<Expr>),
    /// `value in (items)`, or `value not in (items)` when the flag is set (row conditions).
    In(Box<Expr>, Vec<Expr>, bool),
    And(Box<Expr>, Box<Expr>),
    Or(Box<Expr>, Box<Expr>),
    Not(Box<Expr>),
}

impl ExprKind {
    /// Whether this part says yes or no (a comparison, `in`, `and`, `or`, `not`) rather
    /// than giving a value.
    pub fn is_test(&self) -> bool {
        matches!(self, ExprKind::Compare(..) | ExprKind::In(..) | ExprKind::And(..) | ExprKind::Or(..) | ExprKind::Not(_))
    }
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
        let mut start = self.span.start.min(text.len());
        while !text.is_char_boundary(start) {
            start -= 1;
        }
        let mut end = self.span.end.clamp(start, text.len());
        while !text.is_char_boundary(end) {
            end += 1;
        }
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
    Text(String),
    Plus,
    Minus,
    Star,
    Slash,
    LParen,
    RParen,
    Comma,
    Compare(Cmp),
    End,
}

fn describe(t: &Tok) -> String {
    match t {
        Tok::Num(_) => "a number".into(),
        Tok::Ident(s) => format!("'{s}'"),
        Tok::Quoted(s) => format!("\"{s}\""),
        Tok::Text(s) => format!("the text '{s}'"),
        Tok::Plus => "'+'".into(),
        Tok::Minus => "'-'".into(),
        Tok::Star => "'*'".into(),
        Tok::Slash => "'/'".into(),
        Tok::LParen => "'('".into(),
        Tok::RParen => "')'".into(),
        Tok::Comma => "','".into(),
        Tok::Compare(c) => format!("'{}'", c.symbol()),
        Tok::End => "the end".into(),
    }
}

/// Reads a quoted run starting at `start` (the opening `q`), the quote doubled for itself.
/// Returns the text and the index after the closing quote.
fn quoted(text: &str, start: usize, q: char, what: &str) -> Result<(String, usize), ExprError> {
    let mut out = String::new();
    let mut i = start + 1;
    loop {
        match text[i..].find(q) {
            None => return Err(ExprError::new(Span { start, end: start + 1 }, format!("this {what} has no closing '{q}'"))),
            Some(k) => {
                out.push_str(&text[i..i + k]);
                i += k + 1;
                if text[i..].starts_with(q) {
                    out.push(q);
                    i += 1;
                } else {
                    return Ok((out, i));
                }
            }
        }
    }
}

fn lex(text: &str) -> Result<Vec<(Tok, Span)>, ExprError> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let c = b[i];
        let start = i;
        let next = b.get(i + 1).copied();
        let (single, len) = match (c, next) {
            (b' ' | b'\t' | b'\n' | b'\r', _) => {
                i += 1;
                continue;
            }
            (b'+', _) => (Some(Tok::Plus), 1),
            (b'-', _) => (Some(Tok::Minus), 1),
            (b'*', _) => (Some(Tok::Star), 1),
            (b'/', _) => (Some(Tok::Slash), 1),
            (b'(', _) => (Some(Tok::LParen), 1),
            (b')', _) => (Some(Tok::RParen), 1),
            (b',', _) => (Some(Tok::Comma), 1),
            (b'<', Some(b'=')) => (Some(Tok::Compare(Cmp::Le)), 2),
            (b'>', Some(b'=')) => (Some(Tok::Compare(Cmp::Ge)), 2),
            (b'=', Some(b'=')) => (Some(Tok::Compare(Cmp::Eq)), 2),
            (b'!', Some(b'=')) => (Some(Tok::Compare(Cmp::Ne)), 2),
            (b'<', _) => (Some(Tok::Compare(Cmp::Lt)), 1),
            (b'>', _) => (Some(Tok::Compare(Cmp::Gt)), 1),
            (b'=', _) => {
                return Err(ExprError::new(Span { start, end: start + 1 }, "write == to test whether two values are equal"));
            }
            (b'!', _) => {
                return Err(ExprError::new(Span { start, end: start + 1 }, "write != for 'not equal', or not before a condition"));
            }
            _ => (None, 0),
        };
        if let Some(t) = single {
            i += len;
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
            let (name, end) = quoted(text, start, '"', "quoted name")?;
            i = end;
            if name.is_empty() {
                return Err(ExprError::new(Span { start, end: i }, "a quoted name cannot be empty"));
            }
            out.push((Tok::Quoted(name), Span { start, end: i }));
            continue;
        }
        if c == b'\'' {
            let (value, end) = quoted(text, start, '\'', "text")?;
            i = end;
            out.push((Tok::Text(value), Span { start, end: i }));
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

/// Which language is being read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Mode {
    Expression,
    Condition,
}

struct Parser {
    toks: Vec<(Tok, Span)>,
    at: usize,
    mode: Mode,
}

fn node(kind: ExprKind, start: usize, end: usize) -> Expr {
    Expr { kind, span: Span { start, end } }
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

    /// Whether the next token is the condition word `w` (row conditions only).
    fn at_word(&self, w: &str) -> bool {
        self.mode == Mode::Condition && matches!(&self.peek().0, Tok::Ident(s) if s == w)
    }

    /// The top of the grammar for the mode: `sum` or `condition`.
    fn inner(&mut self) -> Result<Expr, ExprError> {
        match self.mode {
            Mode::Expression => self.sum(),
            Mode::Condition => self.disjunction(),
        }
    }

    /// `operand (word operand)*`, joined to the left.
    fn joined(&mut self, word: &str, operand: fn(&mut Parser) -> Result<Expr, ExprError>, join: fn(Box<Expr>, Box<Expr>) -> ExprKind) -> Result<Expr, ExprError> {
        let mut left = operand(self)?;
        while self.at_word(word) {
            self.bump();
            let right = operand(self)?;
            let (s, e) = (left.span.start, right.span.end);
            left = node(join(Box::new(left), Box::new(right)), s, e);
        }
        Ok(left)
    }

    fn disjunction(&mut self) -> Result<Expr, ExprError> {
        self.joined("or", Parser::conjunction, ExprKind::Or)
    }

    fn conjunction(&mut self) -> Result<Expr, ExprError> {
        self.joined("and", Parser::negation, ExprKind::And)
    }

    fn negation(&mut self) -> Result<Expr, ExprError> {
        if self.at_word("not") {
            let (_, s) = self.bump();
            let inner = self.negation()?;
            let e = inner.span.end;
            return Ok(node(ExprKind::Not(Box::new(inner)), s.start, e));
        }
        self.comparison()
    }

    fn comparison(&mut self) -> Result<Expr, ExprError> {
        let left = self.sum()?;
        let negated_in = self.at_word("not") && matches!(self.toks.get(self.at + 1), Some((Tok::Ident(w), _)) if w == "in");
        if negated_in || self.at_word("in") {
            if negated_in {
                self.bump();
            }
            self.bump();
            let (open, ospan) = self.bump();
            if open != Tok::LParen {
                return Err(ExprError::new(ospan, format!("expected '(' and a list after 'in', as in in ('a', 'b'); found {}", describe(&open))));
            }
            if self.peek().0 == Tok::RParen {
                let (_, c) = self.bump();
                return Err(ExprError::new(Span { start: ospan.start, end: c.end }, "the list after 'in' is empty; list at least one value"));
            }
            let mut items = vec![self.sum()?];
            while self.peek().0 == Tok::Comma {
                self.bump();
                items.push(self.sum()?);
            }
            let (close, cspan) = self.bump();
            if close != Tok::RParen {
                return Err(ExprError::new(
                    cspan,
                    format!("expected ',' or ')' to close the '(' at character {}, found {}", ospan.start + 1, describe(&close)),
                ));
            }
            let start = left.span.start;
            return Ok(node(ExprKind::In(Box::new(left), items, negated_in), start, cspan.end));
        }
        let Tok::Compare(op) = self.peek().0 else { return Ok(left) };
        self.bump();
        let right = self.sum()?;
        if let Tok::Compare(_) = self.peek().0 {
            let s = self.peek().1;
            return Err(ExprError::new(s, "compare two values at a time: write a < b and b < c"));
        }
        let (s, e) = (left.span.start, right.span.end);
        Ok(node(ExprKind::Compare(op, Box::new(left), Box::new(right)), s, e))
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
            let (s, e) = (left.span.start, right.span.end);
            left = node(ExprKind::Binary(op, Box::new(left), Box::new(right)), s, e);
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
            let (s, e) = (left.span.start, right.span.end);
            left = node(ExprKind::Binary(op, Box::new(left), Box::new(right)), s, e);
        }
    }

    fn unary(&mut self) -> Result<Expr, ExprError> {
        if self.peek().0 == Tok::Minus {
            let (_, s) = self.bump();
            let inner = self.unary()?;
            let e = inner.span.end;
            return Ok(node(ExprKind::Neg(Box::new(inner)), s.start, e));
        }
        self.primary()
    }

    fn primary(&mut self) -> Result<Expr, ExprError> {
        let (tok, span) = self.bump();
        let condition = self.mode == Mode::Condition;
        match tok {
            Tok::Num(v) => Ok(Expr { kind: ExprKind::Number(v), span }),
            Tok::Quoted(name) if condition => Ok(Expr { kind: ExprKind::Quoted(name), span }),
            Tok::Quoted(name) => Ok(Expr { kind: ExprKind::Column(name), span }),
            Tok::Text(value) if condition => Ok(Expr { kind: ExprKind::Text(value), span }),
            Tok::Text(_) => Err(ExprError::new(
                span,
                "text in single quotes is a value for a row condition; a derived column reads numbers (quote a column name with double quotes: \"a name\")",
            )),
            Tok::Ident(name) if condition && CONDITION_WORDS.contains(&name.as_str()) => Err(ExprError::new(
                span,
                format!("expected a column name, a number or a value here, found the word '{name}' (quote a column of that name: \"{name}\")"),
            )),
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
                let inner = self.inner()?;
                let (close, cspan) = self.bump();
                if close != Tok::RParen {
                    let hint = if condition { ", a comparison, and, or" } else { "" };
                    let found = describe(&close);
                    return Err(ExprError::new(
                        cspan,
                        format!("expected ')' to close the '(' at character {}{hint}, found {found}", span.start + 1),
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

    /// The end of the text, or an error saying what could have come instead.
    fn finish(&mut self) -> Result<(), ExprError> {
        let (t, span) = self.bump();
        if t == Tok::End {
            return Ok(());
        }
        let found = describe(&t);
        let message = match (&t, self.mode) {
            (Tok::Ident(w), Mode::Condition) if ["AND", "OR", "NOT", "IN", "And", "Or", "Not", "In"].contains(&w.as_str()) => {
                format!("expected an operator, a comparison, and, or, or the end, found {found} (the words are written in lower case: {})", w.to_lowercase())
            }
            (_, Mode::Condition) => format!("expected an operator (+ - * /), a comparison (< <= == != >= >), and, or, or the end, found {found}"),
            (Tok::Compare(_), Mode::Expression) => {
                "a derived column computes a number; comparisons belong in a row condition ('Keep rows where'), not in an expression".to_string()
            }
            (_, Mode::Expression) => format!("expected an operator (+ - * /) or the end, found {found}"),
        };
        Err(ExprError::new(span, message))
    }
}

/// Parses a whole derived-column expression.
pub fn parse(text: &str) -> Result<Expr, ExprError> {
    let mut p = Parser { toks: lex(text)?, at: 0, mode: Mode::Expression };
    let e = p.sum()?;
    p.finish()?;
    Ok(e)
}

/// Parses a whole row condition. Whether it says yes or no (rather than giving a number)
/// is checked with the columns, in [`super::condition`].
pub fn parse_condition(text: &str) -> Result<Expr, ExprError> {
    let mut p = Parser { toks: lex(text)?, at: 0, mode: Mode::Condition };
    let e = p.disjunction()?;
    p.finish()?;
    Ok(e)
}

impl Expr {
    /// Every column name the expression reads (bare or double-quoted), with its span, in
    /// order of appearance. In a row condition a double-quoted text may turn out to be a
    /// value; it is listed all the same.
    pub fn columns(&self) -> Vec<(&str, Span)> {
        let mut out = Vec::new();
        self.walk(&mut |e| {
            if let ExprKind::Column(n) | ExprKind::Quoted(n) = &e.kind {
                out.push((n.as_str(), e.span));
            }
        });
        out
    }

    fn walk<'a>(&'a self, f: &mut dyn FnMut(&'a Expr)) {
        f(self);
        match &self.kind {
            ExprKind::Neg(a) | ExprKind::Not(a) => a.walk(f),
            ExprKind::Binary(_, a, b) | ExprKind::Compare(_, a, b) | ExprKind::And(a, b) | ExprKind::Or(a, b) => {
                a.walk(f);
                b.walk(f);
            }
            ExprKind::Call(_, args) => args.iter().for_each(|a| a.walk(f)),
            ExprKind::In(v, items, _) => {
                v.walk(f);
                items.iter().for_each(|a| a.walk(f));
            }
            ExprKind::Number(_) | ExprKind::Column(_) | ExprKind::Quoted(_) | ExprKind::Text(_) => {}
        }
    }
}

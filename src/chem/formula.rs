//! Parsing ideal mineral formulae as mineralogists write them.
//!
//! # Accepted notation
//!
//! - Element symbols with optional counts: `Al2`, `Na0.33`, `Si4`; counts may
//!   also be written with Unicode subscripts (`Fe₂O₃`). A count must be
//!   positive and at most 10 000.
//! - Nested groups in `()`, `[]` or `{}` with an optional multiplier:
//!   `KAl2(AlSi3O10)(OH)2`, `Ca[SO4]`.
//! - Hydration dots between parts: `·` (U+00B7, the usual one), `•` (U+2022),
//!   `∙` (U+2219), `⋅` (U+22C5), `*`, and the ASCII full stop `.` where it
//!   cannot be a decimal point. A part may start with a multiplier, so
//!   `CaSO4·2H2O` is one CaSO4 and two H2O. Spaces are allowed around the
//!   dots and at either end, nowhere else.
//! - An oxidation state, written **immediately after the element symbol and
//!   before its count**: Unicode superscripts `Fe³⁺`, `Fe²⁺` or ASCII
//!   `Fe^3+`, `S^2-`. So `Fe³⁺2O3` is two Fe(3+) and `Fe^2+Fe^3+2O4` is one
//!   Fe(2+) and two Fe(3+). A sign without digits means 1 (`Cu⁺`). Elements
//!   without an annotation take their usual state (see
//!   [`Element::default_oxidation`]).
//!
//! # Ambiguous full stops
//!
//! An ASCII `.` between two digits is a decimal point (`Na0.33`). Written as
//! a hydration dot before a multiplier it would be read the same way, so
//! `CaSO4.2H2O` is rejected with an "ambiguous" error rather than silently
//! read as `CaSO4.2` and `H2O`: use `·` or `*` there, or `(H2O)` after a real
//! decimal.
//!
//! # Errors
//!
//! Every [`FormulaError`] carries a 1-based **character** position (Unicode
//! scalar values, not bytes) and a plain-words message. The parser never
//! panics and does not recurse, whatever the input.

use std::fmt;
use std::str::FromStr;

use super::Element;

/// Largest count or multiplier accepted; no mineral formula needs more, and
/// the bound keeps every product of nested multipliers finite.
const MAX_COUNT: f64 = 10_000.0;

/// Deepest bracket nesting accepted.
const MAX_DEPTH: usize = 16;

/// Longest input accepted, in characters.
const MAX_LEN: usize = 2_000;

/// Longest number (digits and decimal point) accepted.
const MAX_NUMBER_CHARS: usize = 12;

/// Largest oxidation state magnitude accepted (Os(VIII) is the highest known).
const MAX_OXIDATION: i8 = 8;

/// An element in a formula with its optional oxidation-state annotation and
/// its total count.
///
/// Why keep the annotation apart from the element: a formula such as
/// cronstedtite holds Fe²⁺ and Fe³⁺ together, and oxide and charge
/// calculations must treat the two separately.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Species {
    /// The element.
    pub element: Element,
    /// The oxidation state written in the formula, if any.
    pub oxidation: Option<i8>,
    /// Atoms per formula unit (always positive and finite).
    pub count: f64,
}

/// A parsed formula: atoms per formula unit, merged per element and per
/// annotated oxidation state, in order of first appearance.
///
/// Why a type rather than a map: it can only be built by the parser, so its
/// counts are known to be positive and finite and it is never empty.
#[derive(Debug, Clone, PartialEq)]
pub struct Formula {
    species: Vec<Species>,
    elements: Vec<(Element, f64)>,
}

/// What went wrong while parsing a formula, without the position.
///
/// Why a separate enum: callers (the web layer, the base validator) can
/// react to the kind while the message stays in one place.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum FormulaErrorKind {
    /// Nothing but whitespace was given.
    #[error("the formula is empty")]
    Empty,
    /// The input exceeds the length limit.
    #[error("the formula is longer than {MAX_LEN} characters")]
    TooLong,
    /// A capitalised symbol that is not a known element.
    #[error("unknown element symbol \"{0}\"")]
    UnknownElement(String),
    /// A symbol written without its capital letter.
    #[error("element symbols start with a capital letter, but \"{0}\" does not")]
    LowercaseSymbol(String),
    /// A character that has no meaning in a formula.
    #[error("unexpected character '{0}'")]
    UnexpectedChar(char),
    /// A space in the middle of the formula.
    #[error("unexpected space (spaces are allowed only around hydration dots)")]
    UnexpectedSpace,
    /// A closing bracket with no opening one.
    #[error("unmatched \"{0}\"")]
    UnmatchedClose(char),
    /// A closing bracket of the wrong kind.
    #[error("\"{close}\" does not match the \"{open}\" it closes")]
    MismatchedClose {
        /// The bracket that was opened.
        open: char,
        /// The bracket that closed it.
        close: char,
    },
    /// An opening bracket that is never closed (position of the opening).
    #[error("\"{0}\" is never closed")]
    UnclosedGroup(char),
    /// Brackets with nothing inside.
    #[error("empty group")]
    EmptyGroup,
    /// Too many brackets inside one another.
    #[error("brackets are nested more than {MAX_DEPTH} deep")]
    TooDeep,
    /// Nothing before, between or after hydration dots.
    #[error("empty part: there is nothing on one side of a hydration dot")]
    EmptyPart,
    /// A leading multiplier with nothing after it.
    #[error("a multiplier must be followed by a formula")]
    DanglingMultiplier,
    /// A count or multiplier of zero.
    #[error("count of zero")]
    ZeroCount,
    /// A count or multiplier above the limit.
    #[error("count too large (the largest accepted is {MAX_COUNT})")]
    CountTooLarge,
    /// A number that could not be read.
    #[error("malformed number")]
    BadNumber,
    /// A number where no count or multiplier can stand.
    #[error(
        "a number must follow an element symbol or a closing bracket, \
         or start a part after a hydration dot (as in ·2H2O)"
    )]
    StrayNumber,
    /// `n` or `x` used as a count.
    #[error("a variable count such as n or x has no ideal composition; write a number")]
    VariableCount,
    /// A comma, as in solid-solution notation `(Mg,Fe)`.
    #[error(
        "a comma lists alternative elements (a solid solution); \
         write one end-member formula instead"
    )]
    SolidSolution,
    /// A full stop that could be a decimal point or a hydration dot.
    #[error(
        "ambiguous '.': between digits it reads as a decimal point; \
         write a hydrate with '·' or '*' (CaSO4·2H2O), or bracket the water after a decimal count"
    )]
    AmbiguousDot,
    /// An oxidation annotation that could not be read.
    #[error("malformed oxidation state; write it as Fe³⁺ or Fe^3+")]
    BadOxidation,
    /// An oxidation state outside ±1…±8.
    #[error("oxidation state out of range (1 to {MAX_OXIDATION} either sign)")]
    OxidationOutOfRange,
    /// An oxidation annotation anywhere but right after a symbol.
    #[error(
        "an oxidation state goes right after the element symbol, \
         before its count (Fe³⁺2O3)"
    )]
    MisplacedOxidation,
    /// A charge written on a bracketed group.
    #[error("a charge on a bracketed group is not supported; annotate an element inside it")]
    GroupCharge,
    /// A bare `+` or `-`.
    #[error("write a charge with a caret or superscripts, as in Fe^3+ or Fe³⁺")]
    BareCharge,
}

/// A formula that could not be parsed: where (1-based character position)
/// and what.
///
/// Why a position: a geologist typing a long mica formula needs to be told
/// which character to fix.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{kind} at character {position}")]
pub struct FormulaError {
    position: usize,
    kind: FormulaErrorKind,
}

impl FormulaError {
    fn new(index: usize, kind: FormulaErrorKind) -> Self {
        FormulaError {
            position: index + 1,
            kind,
        }
    }

    /// The 1-based position, counted in characters (not bytes), of the
    /// problem; one past the last character when the input ended early.
    pub fn position(&self) -> usize {
        self.position
    }

    /// What went wrong.
    pub fn kind(&self) -> &FormulaErrorKind {
        &self.kind
    }
}

type Result<T> = std::result::Result<T, FormulaError>;

/// One level of bracket nesting while parsing.
struct Frame {
    /// The opening bracket and its index; `None` for the part itself.
    open: Option<(char, usize)>,
    species: Vec<Species>,
}

struct Parser {
    chars: Vec<char>,
    pos: usize,
    /// One past the last non-whitespace character.
    end: usize,
}

fn is_hydration_dot(c: char) -> bool {
    matches!(c, '·' | '•' | '∙' | '⋅' | '*' | '.')
}

fn ascii_digit(c: char) -> Option<char> {
    match c {
        '0'..='9' => Some(c),
        '₀'..='₉' => char::from_digit(c as u32 - '₀' as u32, 10),
        _ => None,
    }
}

fn superscript_digit(c: char) -> Option<u32> {
    match c {
        '⁰' => Some(0),
        '¹' => Some(1),
        '²' => Some(2),
        '³' => Some(3),
        '⁴'..='⁹' => Some(c as u32 - '⁴' as u32 + 4),
        _ => None,
    }
}

fn starts_oxidation(c: char) -> bool {
    c == '^' || c == '⁺' || c == '⁻' || superscript_digit(c).is_some()
}

fn closing_for(open: char) -> char {
    match open {
        '(' => ')',
        '[' => ']',
        _ => '}',
    }
}

impl Parser {
    fn peek(&self) -> Option<char> {
        self.peek_at(self.pos)
    }

    fn peek_at(&self, index: usize) -> Option<char> {
        if index < self.end {
            self.chars.get(index).copied()
        } else {
            None
        }
    }

    fn at_digit(&self) -> bool {
        self.peek().and_then(ascii_digit).is_some()
    }

    fn skip_whitespace(&mut self) {
        while self.peek().is_some_and(char::is_whitespace) {
            self.pos += 1;
        }
    }

    /// Parses the whole input: parts separated by hydration dots.
    fn formula(&mut self) -> Result<Vec<Species>> {
        let mut all = Vec::new();
        loop {
            all.extend(self.part()?);
            if self.pos >= self.end {
                return Ok(all);
            }
            // `part` stops only at the end or at a hydration dot.
            let dot = self.pos;
            self.pos += 1;
            self.skip_whitespace();
            if self.pos >= self.end {
                return Err(FormulaError::new(dot, FormulaErrorKind::EmptyPart));
            }
        }
    }

    /// Parses one part (an optional multiplier and a sequence of items),
    /// stopping before a hydration dot or at the end.
    fn part(&mut self) -> Result<Vec<Species>> {
        let part_start = self.pos;
        let multiplier = if self.at_digit() {
            // A multiplier such as the 0.5 of ·0.5H2O is never ambiguous.
            let value = self.number(false)?;
            if self.peek().is_some_and(starts_oxidation) {
                return Err(FormulaError::new(
                    self.pos,
                    FormulaErrorKind::MisplacedOxidation,
                ));
            }
            Some(value)
        } else {
            None
        };
        let mut stack = vec![Frame {
            open: None,
            species: Vec::new(),
        }];
        while let Some(c) = self.peek() {
            match c {
                'A'..='Z' => self.element(&mut stack)?,
                '(' | '[' | '{' => {
                    if stack.len() > MAX_DEPTH {
                        return Err(FormulaError::new(self.pos, FormulaErrorKind::TooDeep));
                    }
                    stack.push(Frame {
                        open: Some((c, self.pos)),
                        species: Vec::new(),
                    });
                    self.pos += 1;
                }
                ')' | ']' | '}' => self.close(&mut stack, c)?,
                c if is_hydration_dot(c) => break,
                c if c.is_whitespace() => {
                    let space = self.pos;
                    self.skip_whitespace();
                    if !self.peek().is_some_and(is_hydration_dot) {
                        return Err(FormulaError::new(space, FormulaErrorKind::UnexpectedSpace));
                    }
                    break;
                }
                _ => return Err(self.stray(c)),
            }
        }
        let Some(frame) = stack.pop() else {
            return Err(FormulaError::new(part_start, FormulaErrorKind::EmptyPart));
        };
        if let Some((open, index)) = frame.open {
            return Err(FormulaError::new(
                index,
                FormulaErrorKind::UnclosedGroup(open),
            ));
        }
        if frame.species.is_empty() {
            let kind = if multiplier.is_some() {
                FormulaErrorKind::DanglingMultiplier
            } else {
                FormulaErrorKind::EmptyPart
            };
            return Err(FormulaError::new(self.pos, kind));
        }
        let factor = multiplier.unwrap_or(1.0);
        Ok(frame
            .species
            .into_iter()
            .map(|s| Species {
                count: s.count * factor,
                ..s
            })
            .collect())
    }

    /// The error for a character that cannot start an item.
    fn stray(&self, c: char) -> FormulaError {
        let index = self.pos;
        let kind = match c {
            ',' => FormulaErrorKind::SolidSolution,
            '+' | '-' | '−' => FormulaErrorKind::BareCharge,
            c if starts_oxidation(c) => FormulaErrorKind::MisplacedOxidation,
            c if ascii_digit(c).is_some() => FormulaErrorKind::StrayNumber,
            'a'..='z' => {
                let word: String = self
                    .chars
                    .get(index..self.end)
                    .unwrap_or_default()
                    .iter()
                    .take_while(|c| c.is_ascii_lowercase())
                    .take(12)
                    .collect();
                let next = self.peek_at(index + 1);
                let variable = matches!(c, 'n' | 'x')
                    && next.is_none_or(|n| {
                        n.is_ascii_uppercase()
                            || matches!(n, '(' | '[' | '{')
                            || is_hydration_dot(n)
                    });
                if variable {
                    FormulaErrorKind::VariableCount
                } else {
                    FormulaErrorKind::LowercaseSymbol(word)
                }
            }
            c => FormulaErrorKind::UnexpectedChar(c),
        };
        FormulaError::new(index, kind)
    }

    /// Parses a symbol, its optional oxidation state and its optional count.
    fn element(&mut self, stack: &mut [Frame]) -> Result<()> {
        let start = self.pos;
        let mut symbol = String::new();
        while let Some(c) = self.peek() {
            let take = if symbol.is_empty() {
                c.is_ascii_uppercase()
            } else {
                c.is_ascii_lowercase()
            };
            if !take || symbol.len() >= 12 {
                break;
            }
            symbol.push(c);
            self.pos += 1;
        }
        let element = Element::from_symbol(&symbol).ok_or_else(|| {
            FormulaError::new(start, FormulaErrorKind::UnknownElement(symbol.clone()))
        })?;
        let oxidation = self.oxidation()?;
        let count = self.count()?;
        if self.peek().is_some_and(starts_oxidation) {
            return Err(FormulaError::new(
                self.pos,
                FormulaErrorKind::MisplacedOxidation,
            ));
        }
        if let Some(frame) = stack.last_mut() {
            frame.species.push(Species {
                element,
                oxidation,
                count,
            });
        }
        Ok(())
    }

    /// Parses a closing bracket and its multiplier, folding the group into
    /// the enclosing frame.
    fn close(&mut self, stack: &mut Vec<Frame>, close: char) -> Result<()> {
        let index = self.pos;
        if stack.len() < 2 {
            return Err(FormulaError::new(
                index,
                FormulaErrorKind::UnmatchedClose(close),
            ));
        }
        let Some(frame) = stack.pop() else {
            return Err(FormulaError::new(
                index,
                FormulaErrorKind::UnmatchedClose(close),
            ));
        };
        let Some((open, open_index)) = frame.open else {
            return Err(FormulaError::new(
                index,
                FormulaErrorKind::UnmatchedClose(close),
            ));
        };
        if closing_for(open) != close {
            return Err(FormulaError::new(
                index,
                FormulaErrorKind::MismatchedClose { open, close },
            ));
        }
        if frame.species.is_empty() {
            return Err(FormulaError::new(open_index, FormulaErrorKind::EmptyGroup));
        }
        self.pos += 1;
        if self.peek().is_some_and(starts_oxidation) {
            return Err(FormulaError::new(self.pos, FormulaErrorKind::GroupCharge));
        }
        let factor = self.count()?;
        if self.peek().is_some_and(starts_oxidation) {
            return Err(FormulaError::new(self.pos, FormulaErrorKind::GroupCharge));
        }
        if let Some(parent) = stack.last_mut() {
            parent
                .species
                .extend(frame.species.into_iter().map(|s| Species {
                    count: s.count * factor,
                    ..s
                }));
        }
        Ok(())
    }

    /// An optional count: 1 when none is written.
    fn count(&mut self) -> Result<f64> {
        if self.at_digit() {
            self.number(true)
        } else {
            Ok(1.0)
        }
    }

    /// A positive integer or decimal number, in ASCII or subscript digits.
    /// With `check_ambiguity`, a decimal that looks like a misread hydration
    /// dot (`O4.2H2O`, `O4.0.5H2O`) is rejected.
    fn number(&mut self, check_ambiguity: bool) -> Result<f64> {
        let start = self.pos;
        let mut text = String::new();
        while let Some(d) = self.peek().and_then(ascii_digit) {
            text.push(d);
            self.pos += 1;
        }
        let mut decimal_point = None;
        if self.peek() == Some('.') && self.peek_at(self.pos + 1).and_then(ascii_digit).is_some() {
            decimal_point = Some(self.pos);
            text.push('.');
            self.pos += 1;
            while let Some(d) = self.peek().and_then(ascii_digit) {
                text.push(d);
                self.pos += 1;
            }
        }
        if text.len() > MAX_NUMBER_CHARS {
            return Err(FormulaError::new(start, FormulaErrorKind::BadNumber));
        }
        let value: f64 = text
            .parse()
            .map_err(|_| FormulaError::new(start, FormulaErrorKind::BadNumber))?;
        if !value.is_finite() {
            return Err(FormulaError::new(start, FormulaErrorKind::BadNumber));
        }
        if value <= 0.0 {
            return Err(FormulaError::new(start, FormulaErrorKind::ZeroCount));
        }
        if value > MAX_COUNT {
            return Err(FormulaError::new(start, FormulaErrorKind::CountTooLarge));
        }
        if let Some(point) = decimal_point
            && check_ambiguity
            && (self.peek() == Some('.') || self.at_water_then_boundary())
        {
            return Err(FormulaError::new(point, FormulaErrorKind::AmbiguousDot));
        }
        Ok(value)
    }

    /// True when the input continues with `H2O` and then ends, reaches a
    /// hydration dot or a space: the tell-tale of `CaSO4.2H2O`.
    fn at_water_then_boundary(&self) -> bool {
        let water = ['H', '2', 'O'];
        let matches = water
            .iter()
            .enumerate()
            .all(|(i, c)| self.peek_at(self.pos + i) == Some(*c));
        matches
            && self
                .peek_at(self.pos + water.len())
                .is_none_or(|c| is_hydration_dot(c) || c.is_whitespace())
    }

    /// An optional oxidation annotation right after a symbol.
    fn oxidation(&mut self) -> Result<Option<i8>> {
        let start = self.pos;
        let mut magnitude: u32 = 0;
        let mut digits = 0usize;
        let sign = match self.peek() {
            Some('^') => {
                self.pos += 1;
                while let Some(d) = self.peek().and_then(|c| c.to_digit(10)) {
                    magnitude = magnitude.saturating_mul(10).saturating_add(d);
                    digits += 1;
                    self.pos += 1;
                }
                match self.peek() {
                    Some('+') => 1,
                    Some('-') | Some('−') => -1,
                    _ => return Err(FormulaError::new(start, FormulaErrorKind::BadOxidation)),
                }
            }
            Some(c) if starts_oxidation(c) => {
                while let Some(d) = self.peek().and_then(superscript_digit) {
                    magnitude = magnitude.saturating_mul(10).saturating_add(d);
                    digits += 1;
                    self.pos += 1;
                }
                match self.peek() {
                    Some('⁺') => 1,
                    Some('⁻') => -1,
                    _ => return Err(FormulaError::new(start, FormulaErrorKind::BadOxidation)),
                }
            }
            _ => return Ok(None),
        };
        self.pos += 1;
        if digits == 0 {
            magnitude = 1;
        }
        if digits > 2 || magnitude == 0 || magnitude > MAX_OXIDATION as u32 {
            return Err(FormulaError::new(
                start,
                FormulaErrorKind::OxidationOutOfRange,
            ));
        }
        // magnitude ≤ 8, so the conversion cannot fail.
        let magnitude = i8::try_from(magnitude).unwrap_or(MAX_OXIDATION);
        Ok(Some(sign * magnitude))
    }
}

impl Formula {
    /// Parses an ideal formula such as `KAl2(AlSi3O10)(OH)2` or
    /// `CaSO4·2H2O`; see the module documentation for the notation.
    ///
    /// Never panics; every failure is a [`FormulaError`] with a 1-based
    /// character position.
    pub fn parse(input: &str) -> std::result::Result<Formula, FormulaError> {
        let chars: Vec<char> = input.chars().take(MAX_LEN + 1).collect();
        if chars.len() > MAX_LEN {
            return Err(FormulaError::new(MAX_LEN, FormulaErrorKind::TooLong));
        }
        let Some(start) = chars.iter().position(|c| !c.is_whitespace()) else {
            return Err(FormulaError::new(chars.len(), FormulaErrorKind::Empty));
        };
        let end = chars
            .iter()
            .rposition(|c| !c.is_whitespace())
            .map_or(start, |last| last + 1);
        let mut parser = Parser {
            chars,
            pos: start,
            end,
        };
        let raw = parser.formula()?;
        Ok(Formula::from_species(raw))
    }

    fn from_species(raw: Vec<Species>) -> Formula {
        let mut species: Vec<Species> = Vec::new();
        let mut elements: Vec<(Element, f64)> = Vec::new();
        for s in raw {
            match species
                .iter_mut()
                .find(|t| t.element == s.element && t.oxidation == s.oxidation)
            {
                Some(t) => t.count += s.count,
                None => species.push(s),
            }
            match elements.iter_mut().find(|(e, _)| *e == s.element) {
                Some((_, n)) => *n += s.count,
                None => elements.push((s.element, s.count)),
            }
        }
        Formula { species, elements }
    }

    /// Atoms per formula unit for each element, merged over the whole
    /// formula, in order of first appearance.
    pub fn elements(&self) -> &[(Element, f64)] {
        &self.elements
    }

    /// Atoms per formula unit for each element and annotated oxidation
    /// state, in order of first appearance.
    pub fn species(&self) -> &[Species] {
        &self.species
    }

    /// Atoms of `element` per formula unit (0 when absent).
    pub fn count(&self, element: Element) -> f64 {
        self.elements
            .iter()
            .find(|(e, _)| *e == element)
            .map_or(0.0, |(_, n)| *n)
    }

    /// Whether the formula contains `element` at all.
    pub fn contains(&self, element: Element) -> bool {
        self.elements.iter().any(|(e, _)| *e == element)
    }

    /// Whether the formula is a single element, as for a native element
    /// such as graphite (`C`); such a formula is electrically neutral.
    pub fn is_single_element(&self) -> bool {
        self.elements.len() == 1
    }

    /// The oxidation state a species takes in this formula: its annotation,
    /// 0 for an unannotated native element, otherwise the element's default
    /// in this chemical context.
    pub fn state_of(&self, species: &Species) -> i32 {
        match species.oxidation {
            Some(state) => i32::from(state),
            None if self.is_single_element() => 0,
            None => species.element.default_oxidation(self.contains(Element::O)),
        }
    }

    /// The oxidation state of `element` in this formula (annotated or
    /// default). When the formula mixes states of one element, the state
    /// carried by most atoms is returned (the higher one on a tie); see
    /// [`species`](Self::species) for the full picture. For an element that
    /// is absent, its default state in this context.
    pub fn oxidation(&self, element: Element) -> i32 {
        let mut best: Option<(i32, f64)> = None;
        for s in self.species.iter().filter(|s| s.element == element) {
            let state = self.state_of(s);
            let count: f64 = self
                .species
                .iter()
                .filter(|t| t.element == element && self.state_of(t) == state)
                .map(|t| t.count)
                .sum();
            best = match best {
                Some((b, n)) if n > count || (n == count && b >= state) => Some((b, n)),
                _ => Some((state, count)),
            };
        }
        best.map_or_else(
            || element.default_oxidation(self.contains(Element::O)),
            |(state, _)| state,
        )
    }
}

impl FromStr for Formula {
    type Err = FormulaError;

    fn from_str(s: &str) -> std::result::Result<Self, Self::Err> {
        Formula::parse(s)
    }
}

/// Writes a count the way a formula shows it: nothing for 1, an integer
/// without decimals, otherwise up to four decimals with trailing zeros cut.
fn write_count(f: &mut fmt::Formatter<'_>, count: f64) -> fmt::Result {
    if (count - 1.0).abs() < 1e-9 {
        return Ok(());
    }
    let rounded = count.round();
    if (count - rounded).abs() < 1e-9 {
        return write!(f, "{rounded:.0}");
    }
    let text = format!("{count:.4}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "0" {
        // Too small for four decimals: show it exactly rather than as 0.
        return write!(f, "{count}");
    }
    f.write_str(text)
}

fn write_oxidation(f: &mut fmt::Formatter<'_>, state: i8) -> fmt::Result {
    const SUPERSCRIPTS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let magnitude = state.unsigned_abs();
    if magnitude != 1 {
        for digit in magnitude.to_string().chars() {
            let index = digit.to_digit(10).unwrap_or(0) as usize;
            write!(f, "{}", SUPERSCRIPTS.get(index).copied().unwrap_or('⁰'))?;
        }
    }
    f.write_str(if state < 0 { "⁻" } else { "⁺" })
}

/// The normalised formula: each element (and annotated state) once, in
/// order of first appearance, with merged counts, e.g. muscovite
/// `KAl2(AlSi3O10)(OH)2` displays as `KAl3Si3O12H2`.
impl fmt::Display for Formula {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for s in &self.species {
            f.write_str(s.element.symbol())?;
            if let Some(state) = s.oxidation {
                write_oxidation(f, state)?;
            }
            write_count(f, s.count)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn parse(s: &str) -> Formula {
        match Formula::parse(s) {
            Ok(f) => f,
            Err(e) => panic!("{s:?} should parse: {e}"),
        }
    }

    fn error(s: &str) -> FormulaError {
        match Formula::parse(s) {
            Ok(f) => panic!("{s:?} should not parse, got {f}"),
            Err(e) => e,
        }
    }

    fn assert_counts(s: &str, expected: &[(Element, f64)]) {
        let f = parse(s);
        assert_eq!(f.elements().len(), expected.len(), "{s}: {f}");
        for (element, n) in expected {
            let got = f.count(*element);
            assert!(
                (got - n).abs() < 1e-9,
                "{s}: {element} is {got}, expected {n}"
            );
        }
    }

    use Element::*;

    #[test]
    fn required_examples_parse() {
        assert_counts(
            "KAl2(AlSi3O10)(OH)2",
            &[(K, 1.0), (Al, 3.0), (Si, 3.0), (O, 12.0), (H, 2.0)],
        );
        assert_counts(
            "Mg3Si4O10(OH)2",
            &[(Mg, 3.0), (Si, 4.0), (O, 12.0), (H, 2.0)],
        );
        assert_counts(
            "(Mg5Al)(AlSi3O10)(OH)8",
            &[(Mg, 5.0), (Al, 2.0), (Si, 3.0), (O, 18.0), (H, 8.0)],
        );
        assert_counts("Al2Si2O5(OH)4", &[(Al, 2.0), (Si, 2.0), (O, 9.0), (H, 4.0)]);
        assert_counts("Mg3Si2O5(OH)4", &[(Mg, 3.0), (Si, 2.0), (O, 9.0), (H, 4.0)]);
        assert_counts("CaSO4·2H2O", &[(Ca, 1.0), (S, 1.0), (O, 6.0), (H, 4.0)]);
        assert_counts("Mg(OH)2", &[(Mg, 1.0), (O, 2.0), (H, 2.0)]);
        assert_counts("MoS2", &[(Mo, 1.0), (S, 2.0)]);
        assert_counts("C", &[(C, 1.0)]);
        assert_counts("Fe³⁺2O3", &[(Fe, 2.0), (O, 3.0)]);
        assert_counts(
            "KCa4Si8O20F·8H2O",
            &[
                (K, 1.0),
                (Ca, 4.0),
                (Si, 8.0),
                (O, 28.0),
                (F, 1.0),
                (H, 16.0),
            ],
        );
        assert_counts(
            "Na0.33Al1.67Mg0.33Si4O10(OH)2·4H2O",
            &[
                (Na, 0.33),
                (Al, 1.67),
                (Mg, 0.33),
                (Si, 4.0),
                (O, 16.0),
                (H, 10.0),
            ],
        );
    }

    #[test]
    fn elements_keep_first_appearance_order() {
        let f = parse("KAl2(AlSi3O10)(OH)2");
        let order: Vec<_> = f.elements().iter().map(|(e, _)| *e).collect();
        assert_eq!(order, vec![K, Al, Si, O, H]);
    }

    #[test]
    fn brackets_nest_and_multiply() {
        assert_counts("Ca[SO4]", &[(Ca, 1.0), (S, 1.0), (O, 4.0)]);
        assert_counts(
            "K{Mg[Al(OH)2]3}2",
            &[(K, 1.0), (Mg, 2.0), (Al, 6.0), (O, 12.0), (H, 12.0)],
        );
        assert_counts("(OH)", &[(O, 1.0), (H, 1.0)]);
    }

    #[test]
    fn hydration_dots_of_every_kind() {
        for dot in ["·", "•", "∙", "⋅", "*"] {
            assert_counts(
                &format!("CaSO4{dot}2H2O"),
                &[(Ca, 1.0), (S, 1.0), (O, 6.0), (H, 4.0)],
            );
        }
        // An ASCII full stop is a hydration dot where it cannot be a decimal.
        assert_counts("Mg(OH)2.H2O", &[(Mg, 1.0), (O, 3.0), (H, 4.0)]);
        assert_counts("CaSO4 · 2H2O", &[(Ca, 1.0), (S, 1.0), (O, 6.0), (H, 4.0)]);
        assert_counts("  MoS2 ", &[(Mo, 1.0), (S, 2.0)]);
        // Several hydrate parts and decimal multipliers.
        assert_counts(
            "MgSO4·0.5H2O·H2O",
            &[(Mg, 1.0), (S, 1.0), (O, 5.5), (H, 3.0)],
        );
        // Oxide notation: every part may carry a multiplier.
        assert_counts(
            "3MgO·4SiO2·H2O",
            &[(Mg, 3.0), (O, 12.0), (Si, 4.0), (H, 2.0)],
        );
    }

    #[test]
    fn subscript_counts() {
        assert_counts("Fe₂O₃", &[(Fe, 2.0), (O, 3.0)]);
        assert_counts(
            "Mg₃Si₄O₁₀(OH)₂",
            &[(Mg, 3.0), (Si, 4.0), (O, 12.0), (H, 2.0)],
        );
    }

    #[test]
    fn oxidation_annotations() {
        let f = parse("Fe³⁺2O3");
        assert_eq!(f.species()[0].oxidation, Some(3));
        assert_eq!(f.oxidation(Fe), 3);

        let f = parse("Fe^3+2O3");
        assert_eq!(f.species()[0].oxidation, Some(3));
        assert_eq!(f.count(Fe), 2.0);

        let f = parse("Fe^2+Fe^3+2O4");
        assert_eq!(f.species().len(), 3);
        assert_eq!(f.count(Fe), 3.0);
        assert_eq!(f.oxidation(Fe), 3, "most Fe is Fe3+");

        let f = parse("Cu⁺2O");
        assert_eq!(f.species()[0].oxidation, Some(1));
        let f = parse("Mo^4+S^2-2");
        assert_eq!(f.species()[1].oxidation, Some(-2));
        assert_eq!(f.count(S), 2.0);
        // Unannotated: default state in context.
        assert_eq!(parse("FeO").oxidation(Fe), 2);
        assert_eq!(parse("CaSO4").oxidation(S), 6);
        assert_eq!(parse("MoS2").oxidation(S), -2);
        assert_eq!(parse("C").oxidation(C), 0);
        assert_eq!(parse("SiO2").oxidation(Fe), 2, "absent element: default");
    }

    #[test]
    fn display_is_normalised() {
        assert_eq!(parse("KAl2(AlSi3O10)(OH)2").to_string(), "KAl3Si3O12H2");
        assert_eq!(parse("Fe^3+2O3").to_string(), "Fe³⁺2O3");
        assert_eq!(parse("Na0.33Al1.67O").to_string(), "Na0.33Al1.67O");
        assert_eq!(parse("Cu⁺2O").to_string(), "Cu⁺2O");
        assert_eq!(parse("S^2-").to_string(), "S²⁻");
        // The display parses back to the same formula.
        for s in [
            "KCa4Si8O20F·8H2O",
            "Fe^2+Fe^3+2O4",
            "Na0.33Al1.67Mg0.33Si4O10(OH)2·4H2O",
        ] {
            let f = parse(s);
            assert_eq!(parse(&f.to_string()), f, "{s}");
        }
    }

    #[test]
    fn from_str_works() {
        let f: Formula = "Mg(OH)2".parse().unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(f.count(H), 2.0);
    }

    fn assert_error(s: &str, position: usize, kind: FormulaErrorKind) {
        let e = error(s);
        assert_eq!((e.position(), e.kind()), (position, &kind), "{s}: {e}");
    }

    #[test]
    fn bad_formulae_report_kind_and_character_position() {
        use FormulaErrorKind as K;
        assert_error("", 1, K::Empty);
        assert_error("   ", 4, K::Empty);
        assert_error("KAlXx2", 4, K::UnknownElement("Xx".into()));
        assert_error("Mg3Si4O10(OH)2)", 15, K::UnmatchedClose(')'));
        assert_error(
            "Mg3(OH]2",
            7,
            K::MismatchedClose {
                open: '(',
                close: ']',
            },
        );
        assert_error("Mg3(OH2", 4, K::UnclosedGroup('('));
        assert_error("Mg()2", 3, K::EmptyGroup);
        assert_error("Mg0O", 3, K::ZeroCount);
        assert_error("(OH)0", 5, K::ZeroCount);
        assert_error("CaSO4·0H2O", 7, K::ZeroCount);
        assert_error("Mg20000", 3, K::CountTooLarge);
        assert_error("fe2O3", 1, K::LowercaseSymbol("fe".into()));
        assert_error("Mg3 Si4O10", 4, K::UnexpectedSpace);
        assert_error("(Mg,Fe)3Si4O10(OH)2", 4, K::SolidSolution);
        assert_error("CaSO4·", 6, K::EmptyPart);
        assert_error("·H2O", 1, K::EmptyPart);
        assert_error("CaSO4··H2O", 7, K::EmptyPart);
        assert_error("CaSO4·2", 8, K::DanglingMultiplier);
        assert_error("CaSO4·nH2O", 7, K::VariableCount);
        assert_error("CaSO4.2H2O", 6, K::AmbiguousDot);
        assert_error("CaSO4.0.5H2O", 6, K::AmbiguousDot);
        assert_error("Fe2³⁺O3", 4, K::MisplacedOxidation);
        assert_error("Fe^3O3", 3, K::BadOxidation);
        assert_error("Fe^9+", 3, K::OxidationOutOfRange);
        assert_error("Fe⁰⁺", 3, K::OxidationOutOfRange);
        assert_error("(SO4)²⁻", 6, K::GroupCharge);
        assert_error("Fe3+", 4, K::BareCharge);
        assert_error("Mg(2OH)", 4, K::StrayNumber);
        assert_error("Mg#", 3, K::UnexpectedChar('#'));
        assert_error("Na0.0000000000001", 3, K::BadNumber);
    }

    #[test]
    fn positions_count_characters_not_bytes() {
        // '·' is two bytes in UTF-8 but one character.
        let e = error("CaSO4·2H2Xx");
        assert_eq!(e.position(), 10);
        assert_eq!(
            e.to_string(),
            "unknown element symbol \"Xx\" at character 10"
        );
    }

    #[test]
    fn messages_are_plain_words() {
        assert_eq!(
            error("KAlXx2").to_string(),
            "unknown element symbol \"Xx\" at character 4"
        );
        assert_eq!(
            error("Mg(OH)2)").to_string(),
            "unmatched \")\" at character 8"
        );
        assert_eq!(error("Mg()").to_string(), "empty group at character 3");
        assert_eq!(error("Mg0").to_string(), "count of zero at character 3");
    }

    #[test]
    fn nesting_and_length_are_bounded() {
        let deep = format!("{}H{}", "(".repeat(40), ")".repeat(40));
        assert_eq!(error(&deep).kind(), &FormulaErrorKind::TooDeep);
        let ok = format!("{}H{}", "(".repeat(16), ")2".repeat(16));
        assert!((parse(&ok).count(H) - 65536.0).abs() < 1e-6);
        let long = "H".repeat(MAX_LEN + 1);
        assert_eq!(error(&long).kind(), &FormulaErrorKind::TooLong);
    }

    fn check_no_panic(s: &str) {
        if let Ok(f) = Formula::parse(s) {
            assert!(!f.elements().is_empty());
            for (_, n) in f.elements() {
                assert!(n.is_finite() && *n > 0.0, "{s:?} gave count {n}");
            }
            for species in f.species() {
                assert!(species.count.is_finite() && species.count > 0.0);
            }
            // Display never panics (it need not re-parse: merged counts may
            // exceed the input limits).
            assert!(!f.to_string().is_empty());
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]

        #[test]
        fn arbitrary_strings_never_panic(s in any::<String>()) {
            check_no_panic(&s);
        }

        #[test]
        fn formula_like_strings_never_panic(
            s in "[A-Za-z0-9()\\[\\]{}·•.*^+\\-, ⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻₀₁₂₃₄₅₆₇₈₉]{0,40}"
        ) {
            check_no_panic(&s);
        }

        #[test]
        fn plausible_formulae_never_panic(
            parts in proptest::collection::vec(
                (
                    proptest::sample::select(vec!["", "2", "0.5", "10"]),
                    proptest::collection::vec(
                        (
                            proptest::sample::select(vec![
                                "H", "O", "Si", "Al", "Mg", "Fe", "Fe³⁺", "Fe^2+", "K", "(", ")", "[", "]", "(OH)", "Xx", "S^2-",
                            ]),
                            proptest::sample::select(vec!["", "2", "3", "0.33", "0", "10"]),
                        ),
                        1..8,
                    ),
                ),
                1..4,
            )
        ) {
            let text: Vec<String> = parts
                .iter()
                .map(|(m, items)| {
                    let body: String = items.iter().map(|(a, b)| format!("{a}{b}")).collect();
                    format!("{m}{body}")
                })
                .collect();
            check_no_panic(&text.join("·"));
        }
    }
}

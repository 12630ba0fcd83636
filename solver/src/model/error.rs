//! Model errors and warnings: each names the file, the line and column where
//! known, and the shape, material, winding or key at fault.

use std::fmt;

/// The class of a model error, for callers (and tests) that branch on it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The text is not valid TOML.
    Syntax,
    /// A key that the format does not know.
    UnknownKey,
    /// A value of the wrong TOML type (a string where a number belongs...).
    WrongType,
    /// A required key is missing.
    MissingKey,
    /// A number that is NaN, infinite or outside its allowed range, or a
    /// string that is not one of the allowed choices.
    OutOfRange,
    /// Keys that exclude each other given together, or none of a set where
    /// exactly one is needed.
    Conflict,
    /// A name that refers to an undefined material, winding or shape.
    UndefinedName,
    /// A name used twice.
    DuplicateName,
    /// An outline that is not a valid region, or one outside the outer shape.
    Geometry,
    /// A B-H curve that breaks the rules (start at the origin, strictly
    /// increasing, matching lengths, at least two points).
    BhCurve,
    /// A file named by the model could not be read or parsed.
    File,
}

/// One problem found in a model file.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub struct ModelError {
    /// The model file's name as the caller gave it.
    pub file: String,
    /// 1-based line, where known.
    pub line: Option<usize>,
    /// 1-based column (in characters), where known.
    pub column: Option<usize>,
    /// The class of the problem.
    pub kind: ErrorKind,
    /// What is wrong and what to do about it, naming the culprit.
    pub what: String,
}

impl fmt::Display for ModelError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_located(f, &self.file, self.line, self.column, &self.what)
    }
}

/// Something legal but probably not what the author meant (a planar winding
/// with only a go side, an unused material...). Never stops a run.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelWarning {
    /// The model file's name as the caller gave it.
    pub file: String,
    /// 1-based line, where known.
    pub line: Option<usize>,
    /// 1-based column, where known.
    pub column: Option<usize>,
    /// What looks wrong, naming the culprit.
    pub what: String,
}

impl fmt::Display for ModelWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_located(f, &self.file, self.line, self.column, &self.what)
    }
}

fn write_located(
    f: &mut fmt::Formatter<'_>,
    file: &str,
    line: Option<usize>,
    column: Option<usize>,
    what: &str,
) -> fmt::Result {
    match (line, column) {
        (Some(l), Some(c)) => write!(f, "{file}:{l}:{c}: {what}"),
        (Some(l), None) => write!(f, "{file}:{l}: {what}"),
        _ => write!(f, "{file}: {what}"),
    }
}

/// Every error found in a model (the checks go on after the first, so one
/// run shows all of them). Never empty.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub struct ModelErrors {
    /// The errors, in the order of the file where known.
    pub errors: Vec<ModelError>,
}

impl ModelErrors {
    /// Whether any error has this kind.
    pub fn has(&self, kind: ErrorKind) -> bool {
        self.errors.iter().any(|e| e.kind == kind)
    }
}

impl fmt::Display for ModelErrors {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, e) in self.errors.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            write!(f, "{e}")?;
        }
        Ok(())
    }
}

/// Converts byte offsets into 1-based line and column numbers.
#[derive(Clone, Debug)]
pub(crate) struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    pub(crate) fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    /// (line, column) of byte `offset` in `text`; the column counts
    /// characters, so a μ before the culprit counts once.
    pub(crate) fn locate(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = offset.min(text.len());
        let line = match self.starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i.saturating_sub(1),
        };
        let start = self.starts[line];
        let column = text
            .get(start..offset)
            .map(|s| s.chars().count())
            .unwrap_or(offset - start);
        (line + 1, column + 1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_index_counts_lines_and_characters() {
        let text = "a = 1\nμr = 2\n\nx";
        let idx = LineIndex::new(text);
        assert_eq!(idx.locate(text, 0), (1, 1));
        assert_eq!(idx.locate(text, 6), (2, 1));
        // `=` after "μr " is the 4th character although the 5th byte.
        assert_eq!(idx.locate(text, 10), (2, 4));
        assert_eq!(idx.locate(text, text.len() - 1), (4, 1));
    }
}

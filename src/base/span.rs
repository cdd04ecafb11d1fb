//! Byte-offset spans and the line index that turns them into line and column.

/// A byte range `start..end` into the sheet's source text.
///
/// Offsets are stored as `u32` to keep the syntax tree small (a sheet is
/// far below 4 GiB; [`crate::decode_source`] refuses larger input).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct Span {
    start: u32,
    end: u32,
}

/// Largest source a span can address.
pub const MAX_SOURCE_LEN: usize = u32::MAX as usize;

impl Span {
    /// The span `start..end` (offsets past [`MAX_SOURCE_LEN`] saturate).
    pub fn new(start: usize, end: usize) -> Self {
        let clamp = |offset: usize| u32::try_from(offset).unwrap_or(u32::MAX);
        Span {
            start: clamp(start),
            end: clamp(end),
        }
    }

    /// First byte.
    pub fn start(self) -> usize {
        self.start as usize
    }

    /// One past the last byte.
    pub fn end(self) -> usize {
        self.end as usize
    }

    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }

    /// This span moved right by `offset` bytes.
    pub fn shifted(self, offset: usize) -> Span {
        Span::new(self.start() + offset, self.end() + offset)
    }

    /// The text this span covers, or "" if it does not fit `source`.
    pub fn text(self, source: &str) -> &str {
        source.get(self.start()..self.end()).unwrap_or("")
    }
}

/// A 1-based line and column (the column counts characters, not bytes).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LineColumn {
    /// 1-based line number.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
}

/// Start offsets of every line of a source text, for offset → line/column.
#[derive(Clone, Debug, Default)]
pub struct LineIndex {
    line_starts: Vec<usize>,
}

impl LineIndex {
    /// Indexes `source`.
    pub fn new(source: &str) -> Self {
        // Counted first so a large sheet's index is allocated once.
        let mut line_starts = Vec::with_capacity(line_count(source));
        line_starts.push(0);
        line_starts.extend(memchr_newlines(source));
        LineIndex { line_starts }
    }

    /// The 0-based line that holds byte `offset`.
    pub fn line_of(&self, offset: usize) -> usize {
        match self.line_starts.binary_search(&offset) {
            Ok(line) => line,
            Err(next) => next - 1,
        }
    }

    /// Line and character column of byte `offset` in `source`.
    pub fn line_column(&self, source: &str, offset: usize) -> LineColumn {
        let line = self.line_of(offset);
        let start = self.line_starts[line];
        let end = offset.min(source.len()).max(start);
        let column = source
            .get(start..end)
            .map_or(end - start, |prefix| prefix.chars().count());
        LineColumn {
            line: line + 1,
            column: column + 1,
        }
    }

    /// Byte offset where 0-based `line` starts.
    pub fn line_start(&self, line: usize) -> Option<usize> {
        self.line_starts.get(line).copied()
    }

    /// Number of lines.
    pub fn n_lines(&self) -> usize {
        self.line_starts.len()
    }
}

/// How many lines `source` has (one more than its line breaks), for sizing
/// what holds one item per line before filling it.
pub fn line_count(source: &str) -> usize {
    source.bytes().filter(|&byte| byte == b'\n').count() + 1
}

fn memchr_newlines(source: &str) -> impl Iterator<Item = usize> + '_ {
    source
        .bytes()
        .enumerate()
        .filter(|&(_, byte)| byte == b'\n')
        .map(|(offset, _)| offset + 1)
}

//! Maps a path inside a workload file (`designs[1].steps[0].append_rows.batch`) to the
//! line and column where that node starts.
//!
//! serde_yaml reports positions for syntax and type errors, but checks that run after
//! deserialisation (a share above 1, an unknown step) only know the *path* of the bad
//! value. This module replays the file through yaml-rust2's event parser, which carries a
//! marker for every event, and records where each path begins. A newcomer must know: the
//! locator is best effort — if a path is not found (say the YAML uses an alias), the caller
//! falls back to the nearest enclosing path that was found.

use std::collections::HashMap;
use yaml_rust2::parser::{Event, MarkedEventReceiver, Parser};
use yaml_rust2::scanner::Marker;

/// One segment of a path into the YAML tree.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Seg {
    Key(String),
    Index(usize),
}

/// A path into the YAML tree, root first.
#[derive(Debug, Clone, Default, PartialEq, Eq, Hash)]
pub struct YamlPath(pub Vec<Seg>);

impl YamlPath {
    pub fn root() -> Self {
        YamlPath(Vec::new())
    }
    pub fn key(&self, k: &str) -> Self {
        let mut p = self.clone();
        p.0.push(Seg::Key(k.to_string()));
        p
    }
    pub fn index(&self, i: usize) -> Self {
        let mut p = self.clone();
        p.0.push(Seg::Index(i));
        p
    }
    pub fn parent(&self) -> Option<Self> {
        if self.0.is_empty() {
            None
        } else {
            let mut p = self.clone();
            p.0.pop();
            Some(p)
        }
    }
}

impl std::fmt::Display for YamlPath {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.0.is_empty() {
            return write!(f, "(top level)");
        }
        let mut first = true;
        for s in &self.0 {
            match s {
                Seg::Key(k) => {
                    if !first {
                        write!(f, ".")?;
                    }
                    write!(f, "{k}")?;
                }
                Seg::Index(i) => write!(f, "[{i}]")?,
            }
            first = false;
        }
        Ok(())
    }
}

/// Where a node starts: 1-based line and column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Pos {
    pub line: usize,
    pub column: usize,
}

/// Positions of every key (where the key text starts) and of every sequence item.
#[derive(Debug, Default)]
pub struct Locator {
    /// Position of the key for map entries, of the item for sequence entries.
    key_pos: HashMap<YamlPath, Pos>,
    /// Position of the value node itself.
    value_pos: HashMap<YamlPath, Pos>,
}

enum Frame {
    Map { path: YamlPath, pending_key: Option<(String, Pos)>, expecting_key: bool },
    Seq { path: YamlPath, next: usize },
}

struct Recorder {
    stack: Vec<Frame>,
    loc: Locator,
    root_done: bool,
}

fn pos(m: Marker) -> Pos {
    Pos { line: m.line(), column: m.col() + 1 }
}

impl Recorder {
    /// The path of the node that is about to start, and records where it starts.
    fn enter_value(&mut self, at: Pos) -> Option<YamlPath> {
        match self.stack.last_mut() {
            None => {
                if self.root_done {
                    return None;
                }
                self.root_done = true;
                let p = YamlPath::root();
                self.loc.value_pos.insert(p.clone(), at);
                Some(p)
            }
            Some(Frame::Seq { path, next }) => {
                let p = path.index(*next);
                *next += 1;
                self.loc.key_pos.insert(p.clone(), at);
                self.loc.value_pos.insert(p.clone(), at);
                Some(p)
            }
            Some(Frame::Map { path, pending_key, expecting_key }) => {
                let (k, kpos) = pending_key.take()?;
                *expecting_key = true;
                let p = path.key(&k);
                self.loc.key_pos.insert(p.clone(), kpos);
                self.loc.value_pos.insert(p.clone(), at);
                Some(p)
            }
        }
    }
}

impl MarkedEventReceiver for Recorder {
    fn on_event(&mut self, ev: Event, mark: Marker) {
        let at = pos(mark);
        match ev {
            Event::Scalar(text, ..) => {
                if let Some(Frame::Map { pending_key, expecting_key, .. }) = self.stack.last_mut() {
                    if *expecting_key {
                        *pending_key = Some((text, at));
                        *expecting_key = false;
                        return;
                    }
                }
                let _ = self.enter_value(at);
            }
            Event::Alias(_) => {
                let _ = self.enter_value(at);
            }
            Event::SequenceStart(..) => {
                if let Some(Frame::Map { expecting_key: true, .. }) = self.stack.last() {
                    // A complex key: not used in workload files; keep the structure balanced.
                    self.stack.push(Frame::Seq { path: YamlPath(vec![Seg::Key("?".into())]), next: 0 });
                    return;
                }
                let path = self.enter_value(at).unwrap_or_default();
                self.stack.push(Frame::Seq { path, next: 0 });
            }
            Event::MappingStart(..) => {
                if let Some(Frame::Map { expecting_key: true, .. }) = self.stack.last() {
                    self.stack.push(Frame::Map {
                        path: YamlPath(vec![Seg::Key("?".into())]),
                        pending_key: None,
                        expecting_key: true,
                    });
                    return;
                }
                let path = self.enter_value(at).unwrap_or_default();
                self.stack.push(Frame::Map { path, pending_key: None, expecting_key: true });
            }
            Event::SequenceEnd | Event::MappingEnd => {
                self.stack.pop();
                // A closed complex key leaves its parent map waiting for a value we ignore.
                if let Some(Frame::Map { pending_key, expecting_key, .. }) = self.stack.last_mut() {
                    if pending_key.is_none() && !*expecting_key {
                        *expecting_key = true;
                    }
                }
            }
            _ => {}
        }
    }
}

impl Locator {
    /// Build a locator for a YAML text. A text that does not parse gives an empty locator
    /// (serde_yaml reports the syntax error with its own position).
    pub fn new(text: &str) -> Locator {
        let mut rec = Recorder { stack: Vec::new(), loc: Locator::default(), root_done: false };
        let mut parser = Parser::new_from_str(text);
        let _ = parser.load(&mut rec, false);
        rec.loc
    }

    /// Where the key (or sequence item) of `path` starts; falls back to the nearest parent.
    pub fn key(&self, path: &YamlPath) -> Option<Pos> {
        let mut p = Some(path.clone());
        while let Some(q) = p {
            if let Some(at) = self.key_pos.get(&q).or_else(|| self.value_pos.get(&q)) {
                return Some(*at);
            }
            p = q.parent();
        }
        None
    }

    /// Where the value of `path` starts; falls back to the key, then to the nearest parent.
    pub fn value(&self, path: &YamlPath) -> Option<Pos> {
        self.value_pos.get(path).copied().or_else(|| self.key(path))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_keys_values_and_items() {
        let text = "name: x\ntable:\n  columns:\n    - name: a\n      nulls: 1.5\n    - {name: b, kind: int}\n";
        let loc = Locator::new(text);
        let p = YamlPath::root().key("table").key("columns").index(0).key("nulls");
        assert_eq!(loc.key(&p), Some(Pos { line: 5, column: 7 }));
        assert_eq!(loc.value(&p), Some(Pos { line: 5, column: 14 }));
        let q = YamlPath::root().key("table").key("columns").index(1).key("kind");
        assert_eq!(loc.key(&q), Some(Pos { line: 6, column: 17 }));
        // an unknown path falls back to its nearest known parent
        let r = YamlPath::root().key("table").key("columns").index(1).key("nope");
        assert_eq!(loc.key(&r), Some(Pos { line: 6, column: 7 }));
    }

    #[test]
    fn garbage_does_not_panic() {
        for text in ["", ":", "[", "{a: [1, {b: }", "- - - -", "? [a]\n: b\n", "&a x\n*a"] {
            let _ = Locator::new(text);
        }
    }
}

//! Errors of the named frame graph (feature `alloc`).
//!
//! [`GraphError`] is its own type, beside the crate's [`Error`]: it names frames by their
//! (owned, user-given) names and lists "did you mean" candidates, which needs a heap, while
//! [`Error`] is `Copy` and allocation-free so that firmware builds without `alloc` keep it.
//! An edge's own failure is carried inside, as an [`Error`] ([`GraphError::Edge`]).

use alloc::string::String;
use alloc::vec::Vec;
use core::fmt;

use crate::error::Error;

/// Why a graph operation failed, naming frames.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum GraphError {
    /// A frame name not in the graph.
    UnknownFrame {
        /// The name given.
        name: String,
        /// The graph's names closest to it (by edit distance), for "did you mean".
        nearest: Vec<String>,
    },
    /// A frame name already in the graph.
    DuplicateName {
        /// The name.
        name: String,
    },
    /// A frame name that is empty or holds control characters.
    BadName {
        /// The name.
        name: String,
    },
    /// Parent links that loop (in a configuration file).
    Cycle {
        /// The frames on the loop.
        frames: Vec<String>,
    },
    /// Two frames with no common ancestor.
    DifferentTrees {
        /// The query's parent frame.
        parent: String,
        /// The query's child frame.
        child: String,
    },
    /// A frame too deep below the root.
    TooDeep {
        /// The frame.
        name: String,
    },
    /// Apparent accelerations asked of a graph whose root is not inertial.
    NotInertial {
        /// The root's name.
        root: String,
    },
    /// A frame declared in a configuration file whose motion is not attached yet.
    Unattached {
        /// The frame.
        name: String,
        /// What it waits for: `"samples"` or `"function"`.
        kind: &'static str,
    },
    /// Geodetic samples under a parent that is not an Earth-fixed frame.
    NotEarthFixed {
        /// The frame being added.
        name: String,
        /// Its parent.
        parent: String,
    },
    /// An edge's motion could not be evaluated (a time outside a sampled edge's span, a bad
    /// value from a function edge), or an edge's parameters were refused.
    Edge {
        /// The frame.
        name: String,
        /// The position in a batch of times, if the query was batched.
        index: Option<usize>,
        /// Why.
        error: Error,
    },
    /// A configuration file that cannot be read.
    Config {
        /// The line (1-based) the problem is on, when known.
        line: Option<usize>,
        /// What is wrong.
        message: String,
    },
}

impl fmt::Display for GraphError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GraphError::UnknownFrame { name, nearest } => {
                write!(f, "no frame named {name:?}")?;
                match nearest.as_slice() {
                    [] => Ok(()),
                    [one] => write!(f, " (did you mean {one:?}?)"),
                    many => {
                        let quoted: Vec<String> = many.iter().map(|n| alloc::format!("{n:?}")).collect();
                        write!(f, " (did you mean one of {}?)", quoted.join(", "))
                    }
                }
            }
            GraphError::DuplicateName { name } => write!(f, "a frame named {name:?} is already in the graph"),
            GraphError::BadName { name } => write!(f, "frame name {name:?} must be non-empty and hold no control characters"),
            GraphError::Cycle { frames } => write!(f, "the parents of frames {} form a loop", frames.join(" → ")),
            GraphError::DifferentTrees { parent, child } => {
                write!(f, "frames {parent:?} and {child:?} have no common ancestor")
            }
            GraphError::TooDeep { name } => write!(f, "frame {name:?} is more than {} edges below the root", super::MAX_DEPTH),
            GraphError::NotInertial { root } => write!(
                f,
                "the graph's root {root:?} is not declared inertial, so its frames have no apparent accelerations (build the graph with an inertial root)"
            ),
            GraphError::Unattached { name, kind } => write!(
                f,
                "frame {name:?} has no motion yet: attach its {kind} in code (add_{kind} with the same name and parent)"
            ),
            GraphError::NotEarthFixed { name, parent } => write!(
                f,
                "frame {name:?}: geodetic samples are relative to an Earth-fixed frame, but its parent {parent:?} is not one (add it under the frame added with add_earth, or give Cartesian positions)"
            ),
            GraphError::Edge { name, index: Some(i), error } => write!(f, "frame {name:?}, at time index {i}: {error}"),
            GraphError::Edge { name, index: None, error } => write!(f, "frame {name:?}: {error}"),
            GraphError::Config { line: Some(line), message } => write!(f, "frame graph file, line {line}: {message}"),
            GraphError::Config { line: None, message } => write!(f, "frame graph file: {message}"),
        }
    }
}

impl core::error::Error for GraphError {}

/// A short result alias.
pub(crate) type GraphResult<T> = core::result::Result<T, GraphError>;

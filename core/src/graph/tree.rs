//! The named, owned frame graph (feature `alloc`).

use alloc::boxed::Box;
use alloc::collections::BTreeMap;
use alloc::string::{String, ToString};
use alloc::vec::Vec;
use core::fmt;

use nalgebra::Vector3;

use super::error::{GraphError, GraphResult};
use super::iers::IersEarth;
use super::sampled::{SampledEdge, SamplesKind};
use super::{EarthRotation, EdgeCaches, Fixed, FrameId, FrameTree, GraphFault, Motion, Path, Site, Spin, StaticEdge};
use crate::apparent::{ApparentAcceleration, FrameDynamics, apparent_terms};
use crate::error::{Error, Result};
use crate::frames::{AnyFrame, PointKinematics};
use crate::nav::SegmentCache;

/// A user's edge: the motion of the child relative to the parent at a time (s).
pub type EdgeFunction = Box<dyn Fn(f64) -> Result<Motion> + Send + Sync>;

/// A frame whose motion a configuration file names but does not hold; it is supplied in code
/// ([`FrameGraph::add_samples`], [`FrameGraph::add_function`] on the same name and parent).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Declared {
    /// To be attached with samples.
    Samples,
    /// To be attached with a function.
    Function,
}

/// The edge of a frame of a [`FrameGraph`], as the graph holds it.
// A graph holds a handful of frames and reads a static edge on every query: keeping it inline
// saves a pointer chase per edge per time, at the cost of a few hundred bytes per frame.
#[allow(clippy::large_enum_variant)]
pub enum Edge {
    /// The root has no edge.
    Root,
    /// A fixed, spin, Earth or site edge.
    Static(StaticEdge),
    /// The Earth by the full IERS model (ITRS relative to GCRS).
    EarthIers(Box<IersEarth>),
    /// A logged motion.
    Sampled(SampledEdge),
    /// A user's function.
    Function(EdgeFunction),
    /// A user's function evaluated by the caller (a binding whose functions live in another
    /// language); [`FrameGraph::motions_each`] asks for its motion.
    External,
    /// Declared in a configuration, not attached yet.
    Declared(Declared),
}

impl fmt::Debug for Edge {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Edge::Root => f.write_str("Root"),
            Edge::Static(s) => f.debug_tuple("Static").field(s).finish(),
            Edge::EarthIers(e) => f.debug_tuple("EarthIers").field(&e.epoch_tt()).field(&e.eop().span()).finish(),
            Edge::Sampled(s) => f.debug_tuple("Sampled").field(&s.kind()).field(&s.span()).finish(),
            Edge::Function(_) => f.write_str("Function"),
            Edge::External => f.write_str("External"),
            Edge::Declared(d) => f.debug_tuple("Declared").field(d).finish(),
        }
    }
}

impl Edge {
    /// The kind's name, as messages and configuration files spell it.
    #[must_use]
    pub fn kind_name(&self) -> &'static str {
        match self {
            Edge::Root => "root",
            Edge::Static(s) => s.kind_name(),
            Edge::EarthIers(_) => "earth",
            Edge::Sampled(_) | Edge::Declared(Declared::Samples) => "samples",
            Edge::Function(_) | Edge::External | Edge::Declared(Declared::Function) => "function",
        }
    }
}

#[derive(Debug)]
struct Entry {
    name: String,
    parent: Option<FrameId>,
    edge: Edge,
}

/// A tree of named frames over time; see the [module documentation](super).
///
/// Frames are added under existing parents, so the tree never has a cycle; the root is frame
/// 0. Declare the root inertial when it neither rotates nor accelerates (an Earth-centred
/// inertial frame, a laboratory over a short test): then
/// [`apparent_acceleration`](Self::apparent_acceleration) is available in every frame.
#[derive(Debug)]
pub struct FrameGraph {
    inertial: bool,
    frames: Vec<Entry>,
    /// Frame ids by name, so that a lookup or an addition costs `O(log n)`, not a scan.
    ids: BTreeMap<String, FrameId>,
}

impl FrameTree for FrameGraph {
    fn frame_count(&self) -> usize {
        self.frames.len()
    }
    fn parent_of(&self, frame: FrameId) -> Option<FrameId> {
        self.frames[frame].parent
    }
}

/// Refuses a frame name that is empty or holds control characters.
fn check_name(name: &str) -> GraphResult<()> {
    if name.is_empty() || name.chars().any(char::is_control) {
        return Err(GraphError::BadName { name: name.to_string() });
    }
    Ok(())
}

/// The error for a name not among `names`, with the nearest of them (by edit distance, or
/// holding the name given) for "did you mean".
pub(super) fn unknown_frame<'a>(name: &str, names: impl Iterator<Item = &'a str>) -> GraphError {
    let mut scored: Vec<(usize, &str)> = names.map(|n| (edit_distance(name, n), n)).collect();
    scored.sort_by_key(|&(d, n)| (d, n.len()));
    // Close by edit distance, or holding the name given (`imu` for `imu_front`).
    let threshold = (name.chars().count() / 3).max(2);
    let lower = name.to_lowercase();
    let nearest = scored
        .iter()
        .filter(|(d, n)| *d <= threshold || (!lower.is_empty() && n.to_lowercase().contains(&lower)))
        .take(3)
        .map(|(_, n)| (*n).to_string())
        .collect();
    GraphError::UnknownFrame { name: name.to_string(), nearest }
}

/// Edit distance between two names (Levenshtein, by characters).
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let above = row[j + 1];
            row[j + 1] = (diagonal + usize::from(ca != cb)).min(row[j] + 1).min(above + 1);
            diagonal = above;
        }
    }
    row[b.len()]
}

impl FrameGraph {
    /// A graph holding only its root frame, `root`, declared inertial or not.
    ///
    /// ```
    /// let g = rotaframe::graph::FrameGraph::new("lab", true);
    /// assert_eq!(g.frames().collect::<Vec<_>>(), ["lab"]);
    /// ```
    #[must_use]
    pub fn new(root: &str, inertial: bool) -> Self {
        let frames = alloc::vec![Entry { name: root.to_string(), parent: None, edge: Edge::Root }];
        Self { inertial, frames, ids: BTreeMap::from([(root.to_string(), 0)]) }
    }

    /// As [`new`](Self::new), with the root's name checked as every frame's is.
    ///
    /// # Errors
    /// [`GraphError::BadName`] for an empty name or one holding control characters.
    ///
    /// ```
    /// use rotaframe::graph::FrameGraph;
    /// assert!(FrameGraph::try_new("eci", true).is_ok());
    /// assert!(FrameGraph::try_new("", true).is_err());
    /// ```
    pub fn try_new(root: &str, inertial: bool) -> GraphResult<Self> {
        check_name(root)?;
        Ok(Self::new(root, inertial))
    }

    /// Whether the root is declared inertial.
    #[must_use]
    pub fn is_inertial(&self) -> bool {
        self.inertial
    }

    /// The first Earth-fixed frame (one attached by an Earth edge), if any.
    #[must_use]
    pub fn earth_frame(&self) -> Option<FrameId> {
        self.frames.iter().position(|e| matches!(e.edge, Edge::Static(StaticEdge::Earth(_)) | Edge::EarthIers(_)))
    }

    /// The root's name.
    #[must_use]
    pub fn root(&self) -> &str {
        &self.frames[0].name
    }

    /// The frames' names, root first, in the order they were added.
    pub fn frames(&self) -> impl Iterator<Item = &str> {
        self.frames.iter().map(|e| e.name.as_str())
    }

    /// The index of the frame `name`.
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`], with the nearest names.
    pub fn id(&self, name: &str) -> GraphResult<FrameId> {
        match self.ids.get(name) {
            Some(&i) => Ok(i),
            None => Err(unknown_frame(name, self.frames.iter().map(|e| e.name.as_str()))),
        }
    }

    /// The name of frame `id` (panics for an index not from this graph).
    #[must_use]
    pub fn name(&self, id: FrameId) -> &str {
        &self.frames[id].name
    }

    /// The parent of frame `name` (`None` for the root).
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`].
    pub fn parent_of(&self, name: &str) -> GraphResult<Option<&str>> {
        Ok(self.frames[self.id(name)?].parent.map(|p| self.frames[p].name.as_str()))
    }

    /// The edge that attaches frame `name` to its parent.
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`].
    pub fn edge(&self, name: &str) -> GraphResult<&Edge> {
        Ok(&self.frames[self.id(name)?].edge)
    }

    /// The frames from `from` to `to` through their lowest common ancestor, both ends
    /// included.
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`]; [`GraphError::TooDeep`].
    pub fn path(&self, from: &str, to: &str) -> GraphResult<Vec<&str>> {
        let path = self.find_path(self.id(from)?, self.id(to)?)?;
        let mut names: Vec<&str> = path.up().iter().map(|&f| self.name(f)).collect();
        names.push(self.name(path.ancestor()));
        names.extend(path.down().iter().map(|&f| self.name(f)));
        Ok(names)
    }

    /// The path between two frames by index.
    ///
    /// # Errors
    /// As [`Path::between`], with names.
    pub fn find_path(&self, parent: FrameId, child: FrameId) -> GraphResult<Path> {
        Path::between(self, parent, child).map_err(|fault| self.named(fault, None))
    }

    /// A [`GraphFault`] with names (and the batch index, if any).
    fn named(&self, fault: GraphFault, index: Option<usize>) -> GraphError {
        let name = |f: FrameId| self.frames.get(f).map_or_else(|| alloc::format!("#{f}"), |e| e.name.clone());
        match fault {
            GraphFault::UnknownFrame { frame } => GraphError::UnknownFrame { name: name(frame), nearest: Vec::new() },
            GraphFault::DifferentTrees { parent, child } => {
                GraphError::DifferentTrees { parent: name(parent), child: name(child) }
            }
            GraphFault::TooDeep { frame } => GraphError::TooDeep { name: name(frame) },
            GraphFault::NotInertial => GraphError::NotInertial { root: name(0) },
            GraphFault::Unattached { frame } => GraphError::Unattached {
                name: name(frame),
                kind: self.frames.get(frame).map_or("samples", |e| e.edge.kind_name()),
            },
            GraphFault::Edge { frame, error } => GraphError::Edge { name: name(frame), index, error },
        }
    }

    fn check_new_name(&self, name: &str) -> GraphResult<()> {
        check_name(name)?;
        if self.ids.contains_key(name) {
            return Err(GraphError::DuplicateName { name: name.to_string() });
        }
        Ok(())
    }

    /// Adds (or, for a frame declared by a configuration file with the same parent,
    /// attaches) frame `name` under `parent` with `edge`.
    fn insert(&mut self, name: &str, parent: &str, edge: Edge) -> GraphResult<FrameId> {
        let parent_id = self.id(parent)?;
        if let Some(&i) = self.ids.get(name) {
            let entry = &self.frames[i];
            let attachable = matches!(
                (&entry.edge, &edge),
                (Edge::Declared(Declared::Samples), Edge::Sampled(_))
                    | (Edge::Declared(Declared::Function), Edge::Function(_) | Edge::External | Edge::EarthIers(_))
            );
            if attachable && entry.parent == Some(parent_id) {
                self.frames[i].edge = edge;
                return Ok(i);
            }
            return Err(GraphError::DuplicateName { name: name.to_string() });
        }
        self.check_new_name(name)?;
        if self.frames.len() >= u32::MAX as usize {
            return Err(GraphError::TooDeep { name: name.to_string() });
        }
        self.frames.push(Entry { name: name.to_string(), parent: Some(parent_id), edge });
        let id = self.frames.len() - 1;
        // A frame deeper than the paths can hold is refused when added, not when asked about.
        if let Err(fault) = Path::between(self, 0, id) {
            self.frames.pop();
            return Err(self.named(fault, None));
        }
        self.ids.insert(name.to_string(), id);
        Ok(id)
    }

    /// Adds a frame fixed in `parent` (a sensor mount, a lever arm).
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`] (the parent), [`GraphError::DuplicateName`],
    /// [`GraphError::BadName`] or [`GraphError::TooDeep`].
    pub fn add_fixed(&mut self, name: &str, parent: &str, edge: Fixed) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Static(StaticEdge::Fixed(edge)))
    }

    /// Adds a frame spinning in `parent` (a rate table, a rotor, a scanner).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_spin(&mut self, name: &str, parent: &str, edge: Spin) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Static(StaticEdge::Spin(edge)))
    }

    /// Adds an Earth-fixed frame (ECEF) turning relative to `parent` (an inertial frame).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_earth(&mut self, name: &str, parent: &str, edge: EarthRotation) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Static(StaticEdge::Earth(edge)))
    }

    /// Adds the ITRS turning relative to `parent` (the GCRS, an inertial frame) by the full IERS
    /// model, the graph's time being seconds of TT after the edge's epoch. A configuration file
    /// declares it as a function frame (`kind = "function"`): attach it again in code with this
    /// method after loading.
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_earth_iers(&mut self, name: &str, parent: &str, edge: IersEarth) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::EarthIers(Box::new(edge)))
    }

    /// Adds a local-level frame at a fixed geodetic point of `parent` (an Earth-fixed frame).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_site(&mut self, name: &str, parent: &str, edge: Site) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Static(StaticEdge::Site(edge)))
    }

    /// Adds any static edge.
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_static(&mut self, name: &str, parent: &str, edge: StaticEdge) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Static(edge))
    }

    /// Adds a frame moving as logged samples say. Geodetic samples need an Earth-fixed
    /// parent (a frame added with [`add_earth`](Self::add_earth)).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed); [`GraphError::NotEarthFixed`].
    pub fn add_samples(&mut self, name: &str, parent: &str, edge: SampledEdge) -> GraphResult<FrameId> {
        if edge.kind() == SamplesKind::Geodetic {
            let p = self.id(parent)?;
            if !matches!(self.frames[p].edge, Edge::Static(StaticEdge::Earth(_)) | Edge::EarthIers(_)) {
                return Err(GraphError::NotEarthFixed { name: name.to_string(), parent: parent.to_string() });
            }
        }
        self.insert(name, parent, Edge::Sampled(edge))
    }

    /// Adds a frame whose motion relative to `parent` the function `motion` gives at any
    /// time.
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_function(&mut self, name: &str, parent: &str, motion: EdgeFunction) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Function(motion))
    }

    /// Adds a frame whose motion the caller of [`motions_each`](Self::motions_each) supplies
    /// (for bindings whose functions live in another language).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn add_external(&mut self, name: &str, parent: &str) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::External)
    }

    /// Declares a frame whose motion will be attached in code (as a configuration file
    /// does for sampled and function edges).
    ///
    /// # Errors
    /// As [`add_fixed`](Self::add_fixed).
    pub fn declare(&mut self, name: &str, parent: &str, kind: Declared) -> GraphResult<FrameId> {
        self.insert(name, parent, Edge::Declared(kind))
    }

    /// Whether any frame has a function edge (such graphs cannot be saved whole).
    #[must_use]
    pub fn has_functions(&self) -> bool {
        self.frames.iter().any(|e| matches!(e.edge, Edge::Function(_) | Edge::External | Edge::EarthIers(_)))
    }

    /// The motion of frame `frame` relative to its parent at `time`, with `cache` for a sampled
    /// edge and `external` for an external one.
    #[inline(always)]
    fn edge_motion(
        &self,
        frame: FrameId,
        time: f64,
        cache: &mut SegmentCache,
        external: &mut dyn FnMut(FrameId) -> Result<Motion>,
    ) -> core::result::Result<Motion, GraphFault> {
        let wrap = |error| GraphFault::Edge { frame, error };
        match &self.frames[frame].edge {
            Edge::Root => Ok(Motion::identity()),
            Edge::Static(s) => s.motion_at(time).map_err(wrap),
            Edge::EarthIers(e) => e.motion_at(time).map_err(wrap),
            Edge::Sampled(s) => s.motion_at(time, cache).map_err(wrap),
            Edge::Function(f) => f(time).and_then(check_motion).map_err(wrap),
            Edge::External => external(frame).and_then(check_motion).map_err(wrap),
            Edge::Declared(_) => Err(GraphFault::Unattached { frame }),
        }
    }

    /// The motion of `child` relative to `parent` at `time` (s).
    ///
    /// # Errors
    /// [`GraphError::UnknownFrame`] for either name; [`GraphError::Edge`] if an edge on the
    /// path cannot give its motion at `time` (a time outside a sampled edge's span names the
    /// frame, the time and the span); [`GraphError::Unattached`].
    pub fn motion(&self, parent: &str, child: &str, time: f64) -> GraphResult<Motion> {
        let mut out = [Motion::identity()];
        self.motions(self.id(parent)?, self.id(child)?, &[time], &mut out)?;
        Ok(out[0])
    }

    /// The motions of `child` relative to `parent` (by index) at each of `times`, written to
    /// `out` (of the same length). The path is found once; sampled edges remember their last
    /// interval, so ordered times cost one interpolant per interval.
    ///
    /// # Errors
    /// As [`motion`](Self::motion), the index of the failing time in
    /// [`GraphError::Edge`]; [`GraphError::Edge`] naming `out` for a length mismatch.
    pub fn motions(&self, parent: FrameId, child: FrameId, times: &[f64], out: &mut [Motion]) -> GraphResult<()> {
        if out.len() != times.len() {
            return Err(GraphError::Edge {
                name: self.frames.get(child).map_or_else(String::new, |e| e.name.clone()),
                index: None,
                error: Error::LengthMismatch { quantity: "out", found: out.len(), expected: times.len() },
            });
        }
        self.motions_each(
            parent,
            child,
            times,
            |_, _, _| {
                Err(Error::Invalid { quantity: "edge", reason: "this function edge is evaluated by the binding that added it" })
            },
            |i, m| out[i] = m,
        )
    }

    /// The motions of `child` relative to `parent` (by index) at each of `times`, handed to
    /// `sink(index, motion)` in order; `external(frame, index, time)` gives the motion of
    /// every external edge on the path. Nothing is handed out past a failing time.
    ///
    /// # Errors
    /// As [`motions`](Self::motions).
    pub fn motions_each(
        &self,
        parent: FrameId,
        child: FrameId,
        times: &[f64],
        mut external: impl FnMut(FrameId, usize, f64) -> Result<Motion>,
        sink: impl FnMut(usize, Motion),
    ) -> GraphResult<()> {
        let path = self.find_path(parent, child)?;
        motions_along(self, &path, times, &mut external, sink)
    }

    /// A source of the motion of `child` relative to `parent` (by index) at one time after
    /// another, with the path found and folded once and each sampled edge's interval
    /// remembered: for an integrator, which asks at many times one at a time. Function edges
    /// are called as in [`motions`](Self::motions); a path through an external edge is an
    /// error when evaluated (its binding evaluates it).
    ///
    /// # Errors
    /// As [`find_path`](Self::find_path).
    ///
    /// ```
    /// use rotaframe::earth::WGS84;
    /// use rotaframe::graph::{EarthRotation, FrameGraph};
    /// let mut g = FrameGraph::new("inertial", true);
    /// let ecef = g.add_earth("ecef", "inertial", EarthRotation::with_angle(WGS84, 0.0)?)?;
    /// let mut source = g.motion_source(0, ecef)?;
    /// let m = source.at(60.0)?;
    /// assert!((m.rotation().angle() - 7.292115e-5 * 60.0).abs() < 1e-15);
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    pub fn motion_source(&self, parent: FrameId, child: FrameId) -> GraphResult<MotionSource<'_>> {
        let path = self.find_path(parent, child)?;
        Ok(MotionSource { graph: self, folded: self.fold(&path), caches: EdgeCaches::default() })
    }

    /// The path with its constant edges composed once.
    fn fold(&self, path: &Path) -> super::FoldedPath {
        path.fold(|frame| match &self.frames[frame].edge {
            Edge::Static(s) => s.constant_motion(),
            _ => None,
        })
    }

    /// The axes of a local-level frame (one attached by a site edge), `None` for any other.
    #[must_use]
    pub fn local_axes_of(&self, frame: FrameId) -> Option<super::LocalAxes> {
        match self.frames.get(frame).map(|e| &e.edge) {
            Some(Edge::Static(StaticEdge::Site(s))) => Some(s.axes()),
            _ => None,
        }
    }

    /// The apparent accelerations, resolved in `frame`, on a point at `position` moving at
    /// `velocity` relative to `frame` (both resolved in it), at `time`. Needs an inertial root.
    ///
    /// # Errors
    /// [`GraphError::NotInertial`]; as [`motion`](Self::motion); [`GraphError::Edge`]
    /// naming `position` or `velocity` beyond the [`limits`](crate::limits).
    pub fn apparent_acceleration(
        &self,
        frame: &str,
        time: f64,
        position: &Vector3<f64>,
        velocity: &Vector3<f64>,
    ) -> GraphResult<ApparentAcceleration<AnyFrame>> {
        if !self.inertial {
            return Err(self.named(GraphFault::NotInertial, None));
        }
        let id = self.id(frame)?;
        PointKinematics::<AnyFrame>::try_new(*position, *velocity, Vector3::zeros()).map_err(|error| GraphError::Edge {
            name: frame.to_string(),
            index: None,
            error,
        })?;
        let mut out = [Motion::identity()];
        self.motions(0, id, &[time], &mut out)?;
        Ok(apparent_terms(&FrameDynamics::of_motion(&out[0].assume_frames::<crate::frames::Eci, AnyFrame>()), position, velocity))
    }
}

/// The motions along `path` at every time (the body of [`FrameGraph::motions_each`]), by the
/// shared loop of [`FoldedPath::motions_at_times`](super::FoldedPath::motions_at_times). (An
/// AVX2 twin was measured slower here: the loop calls the platform's `sincos`.)
#[inline(always)]
fn motions_along(
    graph: &FrameGraph,
    path: &Path,
    times: &[f64],
    external: &mut dyn FnMut(FrameId, usize, f64) -> Result<Motion>,
    sink: impl FnMut(usize, Motion),
) -> GraphResult<()> {
    let folded = graph.fold(path);
    folded
        .motions_at_times(
            times,
            |frame, index, time, cache| graph.edge_motion(frame, time, cache, &mut |f| external(f, index, time)),
            sink,
        )
        .map_err(|(index, fault)| graph.named(fault, (times.len() > 1).then_some(index)))
}

/// The motion of one frame relative to another at one time after another
/// ([`FrameGraph::motion_source`]).
#[derive(Debug)]
pub struct MotionSource<'a> {
    graph: &'a FrameGraph,
    folded: super::FoldedPath,
    caches: EdgeCaches,
}

impl MotionSource<'_> {
    /// The motion at `time` (s).
    ///
    /// # Errors
    /// [`GraphError::Edge`] naming the frame whose edge cannot give its motion at `time`.
    pub fn at(&mut self, time: f64) -> GraphResult<Motion> {
        let mut external = |_: FrameId| -> Result<Motion> {
            Err(Error::Invalid { quantity: "edge", reason: "this external edge is evaluated by the binding that added it" })
        };
        let graph = self.graph;
        self.folded
            .motion_at_time(0, time, &mut self.caches, |frame, _, time, cache| {
                graph.edge_motion(frame, time, cache, &mut external)
            })
            .map_err(|fault| graph.named(fault, None))
    }
}

/// A motion from a function edge, checked like any constructed motion (finite, within the
/// limits, unit rotation).
fn check_motion(m: Motion) -> Result<Motion> {
    FrameMotion::from_parts(m.parts())
}

use crate::motion::FrameMotion;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_counts_insertions_deletions_and_substitutions() {
        // Levenshtein's classic example: kitten → sitting is 3 (common practice).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("imu", "imu"), 0);
    }

    #[test]
    fn unknown_frames_list_the_nearest_names() {
        let mut g = FrameGraph::new("inertial", true);
        let mount = Fixed::new(nalgebra::UnitQuaternion::identity(), Vector3::zeros()).unwrap();
        g.add_fixed("imu_front", "inertial", mount).unwrap();
        g.add_fixed("imu_rear", "inertial", mount).unwrap();
        let e = g.id("imu_frnt").unwrap_err();
        assert_eq!(e.to_string(), "no frame named \"imu_frnt\" (did you mean \"imu_front\"?)");
        assert!(g.id("imu").unwrap_err().to_string().contains("did you mean"));
    }
}

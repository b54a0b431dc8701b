//! The evaluation of a path at one time after another: the one loop that the named
//! [`FrameGraph`](super::FrameGraph) and the C interface's caller-owned graphs both run.
//!
//! At each time `t` the motion of the query is the folded composition of its edges
//! ([`FoldedPath::compose_from`], `M_pc(t) = M_Ap(t)⁻¹ · M_Ac(t)`), each variable edge asked for
//! its motion at `t`. A sampled edge keeps the interval it last interpolated in a
//! [`SegmentCache`]; the path visits its variable edges in the same order at every time, each
//! once, so the k-th visit keeps the k-th memory ([`EdgeCaches`]) and ordered times cost one
//! interpolant per interval. No allocation.

use super::{EdgeMotions, FoldedPath, FrameId, MAX_DEPTH, Motion};
use crate::nav::SegmentCache;

/// One interval memory per edge a path can visit (at most `2 · MAX_DEPTH`).
#[derive(Debug, Clone, Copy)]
pub struct EdgeCaches([SegmentCache; 2 * MAX_DEPTH]);

impl Default for EdgeCaches {
    fn default() -> Self {
        Self([SegmentCache::default(); 2 * MAX_DEPTH])
    }
}

/// The edges of one time: `edge(frame, index, time, cache)` for each visit, in order.
struct AtTime<'a, F> {
    edge: &'a mut F,
    caches: &'a mut EdgeCaches,
    index: usize,
    time: f64,
    visit: usize,
}

impl<E, F: FnMut(FrameId, usize, f64, &mut SegmentCache) -> Result<Motion, E>> EdgeMotions for AtTime<'_, F> {
    type Error = E;
    // A trait method inlined into the composition (a closure passed down may not be: a
    // store-forwarding stall per edge).
    #[inline(always)]
    fn edge_motion(&mut self, frame: FrameId) -> Result<Motion, E> {
        // The visits of a path never exceed its edges (at most 2 · MAX_DEPTH); the bound keeps
        // a malformed caller's tree from indexing past the array.
        let cache = &mut self.caches.0[self.visit.min(2 * MAX_DEPTH - 1)];
        self.visit += 1;
        (self.edge)(frame, self.index, self.time, cache)
    }
}

impl FoldedPath {
    /// The motion at `time`, with `edge(frame, index, time, cache)` giving the motion of each
    /// variable edge relative to its parent (`index` is handed through, for the caller's
    /// messages) and `caches` the interval memories of the sampled edges, kept between calls.
    ///
    /// # Errors
    /// The first error of `edge`.
    ///
    /// ```
    /// use rotaframe::graph::{EdgeCaches, Fixed, FrameTree, Motion, Path};
    /// # use nalgebra::{UnitQuaternion, Vector3};
    /// # struct Chain;
    /// # impl FrameTree for Chain {
    /// #     fn frame_count(&self) -> usize { 2 }
    /// #     fn parent_of(&self, f: usize) -> Option<usize> { (f == 1).then_some(0) }
    /// # }
    /// let mount = Fixed::new(UnitQuaternion::identity(), Vector3::new(1.0, 0.0, 0.0))?.motion();
    /// let folded = Path::between(&Chain, 0, 1)?.fold(|_| None);
    /// let m = folded.motion_at_time(0, 2.0, &mut EdgeCaches::default(), |_, _, _, _| Ok::<_, ()>(mount)).unwrap();
    /// assert_eq!(m.position().x, 1.0);
    /// # Ok::<(), Box<dyn std::error::Error>>(())
    /// ```
    #[inline(always)]
    pub fn motion_at_time<E>(
        &self,
        index: usize,
        time: f64,
        caches: &mut EdgeCaches,
        mut edge: impl FnMut(FrameId, usize, f64, &mut SegmentCache) -> Result<Motion, E>,
    ) -> Result<Motion, E> {
        self.compose_from(&mut AtTime { edge: &mut edge, caches, index, time, visit: 0 })
    }

    /// The motions at each of `times`, handed to `sink(index, motion)` in order, with `edge` as
    /// in [`motion_at_time`](Self::motion_at_time). Nothing is handed out past a failing time.
    ///
    /// # Errors
    /// The index of the first failing time and the error of `edge` there.
    #[inline(always)]
    pub fn motions_at_times<E>(
        &self,
        times: &[f64],
        mut edge: impl FnMut(FrameId, usize, f64, &mut SegmentCache) -> Result<Motion, E>,
        mut sink: impl FnMut(usize, Motion),
    ) -> Result<(), (usize, E)> {
        let mut caches = EdgeCaches::default();
        for (index, &time) in times.iter().enumerate() {
            let m = self
                .compose_from(&mut AtTime { edge: &mut edge, caches: &mut caches, index, time, visit: 0 })
                .map_err(|e| (index, e))?;
            sink(index, m);
        }
        Ok(())
    }
}

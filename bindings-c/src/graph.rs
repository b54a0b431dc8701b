//! Frame graphs in caller-provided storage: frames identified by the small integers the add
//! calls return, edges of every kind, and the motion of any frame relative to any other at
//! any time. No heap: the nodes live in the caller's array, a sampled edge keeps a pointer to
//! the caller's samples. The paths and compositions are the core's (`rotaframe::graph`).

use core::ffi::c_void;

use rotaframe::earth::Geodetic;
use rotaframe::graph::{EarthRotation, Fixed, FrameId, FrameTree, GraphFault, LocalAxes, Motion, Path, Site, Spin};
use rotaframe::nalgebra::{Quaternion, Vector3};
use rotaframe::nav::{GeodeticPoses, PoseSource, RecordedSample, SampleSource, SampledMotion, SegmentCache};

use crate::nav::rf_recorded_sample;
use crate::status::{Fallible, RF_STATUS_INVALID_ARGUMENT, boundary, disjoint, out, read, region, rf_status, slice, slice_mut};
use crate::types::{rf_apparent_terms, rf_earth_model, rf_frame_motion, rf_geodetic, rf_point_kinematics, rf_quat, rf_vec3};

/// Edge kinds of a graph node.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_edge_kind {
    /// The root (no edge).
    RF_EDGE_ROOT = 0,
    /// A constant rotation and offset.
    RF_EDGE_FIXED = 1,
    /// A spin about a fixed axis.
    RF_EDGE_SPIN = 2,
    /// The Earth's rotation (ECEF relative to the inertial frame).
    RF_EDGE_EARTH = 3,
    /// A local-level frame at a fixed geodetic point.
    RF_EDGE_SITE = 4,
    /// Geodetic samples (`rf_recorded_sample`) relative to an Earth-fixed parent.
    RF_EDGE_SAMPLES_GEODETIC = 5,
    /// Cartesian samples (`rf_pose_sample`) in the parent.
    RF_EDGE_SAMPLES_CARTESIAN = 6,
    /// A caller's function of time.
    RF_EDGE_FUNCTION = 7,
}

crate::enums::c_enum!(rf_edge_kind {
    RF_EDGE_ROOT,
    RF_EDGE_FIXED,
    RF_EDGE_SPIN,
    RF_EDGE_EARTH,
    RF_EDGE_SITE,
    RF_EDGE_SAMPLES_GEODETIC,
    RF_EDGE_SAMPLES_CARTESIAN,
    RF_EDGE_FUNCTION,
});

/// Local-level axes of a site, for `rf_graph_add_site`.
#[repr(u32)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum rf_local_axes {
    /// North, east, down.
    RF_AXES_NED = 0,
    /// East, north, up.
    RF_AXES_ENU = 1,
}

crate::enums::c_enum!(rf_local_axes { RF_AXES_NED, RF_AXES_ENU });

/// A Cartesian sample of a child frame's pose in its parent: time (s), position of its origin
/// in the parent (m) and child-to-parent attitude.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct rf_pose_sample {
    /// Time (s).
    pub time: f64,
    /// Origin of the child in the parent (m).
    pub position: rf_vec3,
    /// Child-to-parent rotation.
    pub attitude: rf_quat,
}

/// A caller's edge: writes the motion of the child relative to the parent at `time` (s) to
/// `out_motion` and returns `RF_STATUS_OK`, or any other status to abort the query.
pub type rf_edge_motion_fn =
    Option<unsafe extern "C" fn(context: *mut c_void, time: f64, out_motion: *mut rf_frame_motion) -> rf_status>;

/// One frame of a graph, in the caller's storage. The add functions fill it; treat it as
/// opaque (the fields a kind does not use are zero).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct rf_graph_node {
    /// Index of the parent frame (0 for the root's own node).
    pub parent: u32,
    /// An `rf_edge_kind` value.
    pub kind: u32,
    /// The constant motion of a fixed or site edge.
    pub motion: rf_frame_motion,
    /// Unit axis of a spin, in the parent.
    pub spin_axis: rf_vec3,
    /// Rate of a spin at t = 0 (rad/s).
    pub spin_rate: f64,
    /// Angle of a spin at t = 0 (rad).
    pub spin_angle_at_zero: f64,
    /// Constant angular acceleration of a spin (rad/s²).
    pub spin_angular_acceleration: f64,
    /// The Earth model of an Earth edge or of geodetic samples.
    pub model: rf_earth_model,
    /// Rotation angle of an Earth edge at t = 0 (rad).
    pub earth_angle_at_epoch: f64,
    /// The caller's samples of a sampled edge (`rf_recorded_sample` or `rf_pose_sample`),
    /// kept by pointer: they must stay valid and unchanged while the graph is used.
    pub samples: *const c_void,
    /// Number of samples.
    pub sample_count: usize,
    /// The function of a function edge.
    pub function: rf_edge_motion_fn,
    /// The context handed to the function.
    pub context: *mut c_void,
}

impl Default for rf_graph_node {
    fn default() -> Self {
        Self {
            parent: 0,
            kind: rf_edge_kind::RF_EDGE_ROOT as u32,
            motion: rf_frame_motion::default(),
            spin_axis: rf_vec3::default(),
            spin_rate: 0.0,
            spin_angle_at_zero: 0.0,
            spin_angular_acceleration: 0.0,
            model: rf_earth_model::default(),
            earth_angle_at_epoch: 0.0,
            samples: core::ptr::null(),
            sample_count: 0,
            function: None,
            context: core::ptr::null_mut(),
        }
    }
}

/// A frame graph over caller storage: `nodes[0..count]` are its frames, frame 0 the root.
/// Create with `rf_graph_init`; add frames with the `rf_graph_add_*` functions.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct rf_graph {
    /// The caller's node storage.
    pub nodes: *mut rf_graph_node,
    /// Number of nodes the storage holds.
    pub capacity: usize,
    /// Number of frames in the graph (the root included).
    pub count: usize,
    /// 1 if the root is inertial (then `rf_graph_apparent` works), else 0.
    pub root_inertial: u32,
}

/// Read access to a graph's nodes.
struct Nodes<'a>(&'a [rf_graph_node]);

impl FrameTree for Nodes<'_> {
    fn frame_count(&self) -> usize {
        self.0.len()
    }
    fn parent_of(&self, frame: FrameId) -> Option<FrameId> {
        if frame == 0 { None } else { Some(self.0[frame].parent as usize) }
    }
}

/// A caller's Cartesian samples, read in place.
struct PoseArray<'a>(&'a [rf_pose_sample]);

impl PoseSource for PoseArray<'_> {
    fn len(&self) -> usize {
        self.0.len()
    }
    fn time(&self, index: usize) -> f64 {
        self.0[index].time
    }
    fn pose(&self, index: usize) -> rotaframe::Result<(Vector3<f64>, Quaternion<f64>)> {
        let s = &self.0[index];
        let r: Vector3<f64> = s.position.into();
        rotaframe::limits::check_vector(&r, rotaframe::limits::MAX_POSITION, "m", "position")?;
        let q = rotaframe::rotation::quaternion_from_wxyz([s.attitude.w, s.attitude.x, s.attitude.y, s.attitude.z], "attitude")?;
        Ok((r, q.into_inner()))
    }
}

/// A caller's geodetic samples, read in place.
struct RecordArray<'a>(&'a [rf_recorded_sample]);

impl SampleSource for RecordArray<'_> {
    fn len(&self) -> usize {
        self.0.len()
    }
    fn sample(&self, index: usize) -> RecordedSample {
        let s = &self.0[index];
        RecordedSample {
            time: s.time,
            position: s.position.into(),
            attitude: [s.attitude.w, s.attitude.x, s.attitude.y, s.attitude.z],
        }
    }
    fn time(&self, index: usize) -> f64 {
        self.0[index].time
    }
}

impl rf_graph {
    /// The graph's frames.
    ///
    /// # Safety
    /// `nodes` holds `count` initialised nodes (as `rf_graph_init` and the add functions
    /// leave it).
    unsafe fn frames(&self) -> Fallible<&[rf_graph_node]> {
        if self.count == 0 || self.count > self.capacity {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        unsafe { slice(self.nodes.cast_const(), self.count) }
    }

    /// Appends `node` under `parent`, returning its index.
    ///
    /// # Safety
    /// As [`frames`](Self::frames); `nodes` has room for `capacity` nodes.
    unsafe fn push(&mut self, parent: u32, mut node: rf_graph_node) -> Fallible<u32> {
        let count = unsafe { self.frames() }?.len();
        if parent as usize >= count {
            return Err(rotaframe::Error::OutOfRange {
                quantity: "parent",
                value: f64::from(parent),
                min: 0.0,
                max: (count - 1) as f64,
            }
            .into());
        }
        if count >= self.capacity || count >= u32::MAX as usize {
            return Err(
                rotaframe::Error::LengthMismatch { quantity: "storage", found: self.capacity, expected: count + 1 }.into()
            );
        }
        node.parent = parent;
        // The new frame's depth must fit the core's paths.
        let mut depth = 1;
        let mut p = parent as usize;
        let frames = unsafe { self.frames() }?;
        while p != 0 {
            p = frames[p].parent as usize;
            depth += 1;
            if depth > rotaframe::graph::MAX_DEPTH {
                return Err(
                    rotaframe::Error::OutOfRange { quantity: "parent", value: f64::from(parent), min: 0.0, max: 0.0 }.into()
                );
            }
        }
        // SAFETY: `count < capacity`, so slot `count` is inside the caller's storage.
        unsafe { self.nodes.add(count).write(node) };
        self.count = count + 1;
        Ok(count as u32)
    }
}

/// The motion of `frame` relative to its parent at `time`.
fn edge_motion(node: &rf_graph_node, time: f64, cache: &mut SegmentCache) -> Fallible<Motion> {
    let kind = rf_edge_kind::from_u32(node.kind).ok_or(RF_STATUS_INVALID_ARGUMENT)?;
    Ok(match kind {
        rf_edge_kind::RF_EDGE_ROOT => Motion::identity(),
        rf_edge_kind::RF_EDGE_FIXED | rf_edge_kind::RF_EDGE_SITE => node.motion.to_core()?,
        rf_edge_kind::RF_EDGE_SPIN => {
            Spin::new(node.spin_axis.into(), node.spin_rate, node.spin_angle_at_zero, node.spin_angular_acceleration)?
                .motion_at(time)?
        }
        rf_edge_kind::RF_EDGE_EARTH => {
            EarthRotation::with_angle(node.model.to_core()?, node.earth_angle_at_epoch)?.motion_at(time)?
        }
        rf_edge_kind::RF_EDGE_SAMPLES_CARTESIAN => {
            let samples = unsafe { slice(node.samples.cast::<rf_pose_sample>(), node.sample_count) }?;
            SampledMotion::new_unchecked(PoseArray(samples)).motion_cached(time, cache)?
        }
        rf_edge_kind::RF_EDGE_SAMPLES_GEODETIC => {
            let samples = unsafe { slice(node.samples.cast::<rf_recorded_sample>(), node.sample_count) }?;
            let poses = GeodeticPoses { model: node.model.to_core()?, source: RecordArray(samples) };
            SampledMotion::new_unchecked(poses).motion_cached(time, cache)?
        }
        rf_edge_kind::RF_EDGE_FUNCTION => {
            let f = node.function.ok_or(crate::status::RF_STATUS_NULL_POINTER)?;
            let mut m = rf_frame_motion::default();
            // SAFETY: the caller registered `f` with this context and vouches for both.
            let status = unsafe { f(node.context, time, &mut m) };
            if status != rf_status::RF_STATUS_OK {
                return Err(status);
            }
            m.to_core()?
        }
    })
}

fn fault(f: GraphFault) -> rf_status {
    match f {
        GraphFault::Edge { error, .. } => error.into(),
        GraphFault::NotInertial => RF_STATUS_INVALID_ARGUMENT,
        _ => RF_STATUS_INVALID_ARGUMENT,
    }
}

/// The motions of `child` relative to `parent` at each time, handed to `sink`.
fn motions(frames: &[rf_graph_node], parent: u32, child: u32, times: &[f64], sink: impl FnMut(usize, Motion)) -> Fallible<()> {
    let tree = Nodes(frames);
    let path = Path::between(&tree, parent as usize, child as usize).map_err(|f| match f {
        GraphFault::UnknownFrame { .. } => rotaframe::Error::OutOfRange {
            quantity: "frame",
            value: f64::from(parent.max(child)),
            min: 0.0,
            max: (frames.len() - 1) as f64,
        }
        .into(),
        other => fault(other),
    })?;
    // Constant edges composed once, and the times evaluated by the core's loop, as the Rust
    // graph does. A node whose stored motion does not convert is left to fail at its first time.
    let folded = path.fold(|frame| {
        let node = &frames[frame];
        match rf_edge_kind::from_u32(node.kind) {
            Some(rf_edge_kind::RF_EDGE_FIXED | rf_edge_kind::RF_EDGE_SITE) => node.motion.to_core().ok(),
            _ => None,
        }
    });
    folded.motions_at_times(times, |frame, _, time, cache| edge_motion(&frames[frame], time, cache), sink).map_err(|(_, e)| e)
}

/// An empty graph (its root, frame 0, only) over the caller's `storage` of `capacity` nodes
/// (at least 1), written to `out_graph`. The graph keeps the storage pointer.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_init(
    storage: *mut rf_graph_node,
    capacity: usize,
    root_inertial: u32,
    out_graph: *mut rf_graph,
) -> rf_status {
    boundary(|| {
        let out_graph = unsafe { out(out_graph) }?;
        let nodes = unsafe { slice_mut(storage, capacity) }?;
        let root = nodes.first_mut().ok_or(rotaframe::Error::LengthMismatch { quantity: "capacity", found: 0, expected: 1 })?;
        *root = rf_graph_node::default();
        *out_graph = rf_graph { nodes: storage, capacity, count: 1, root_inertial: u32::from(root_inertial != 0) };
        Ok(())
    })
}

/// Adds a frame fixed in `parent`: `rotation` child to parent, `position` of its origin in the
/// parent (m). Its index goes to `out_frame`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_fixed(
    graph: *mut rf_graph,
    parent: u32,
    rotation: *const rf_quat,
    position: *const rf_vec3,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let q = unsafe { read(rotation) }?.to_core("rotation")?;
        let r: Vector3<f64> = unsafe { read(position) }?.into();
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        let fixed = Fixed::new(q, r)?;
        let node =
            rf_graph_node { kind: rf_edge_kind::RF_EDGE_FIXED as u32, motion: (&fixed.motion()).into(), ..Default::default() };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds a frame spinning in `parent` about `axis` (in the parent) at `rate` (rad/s), with
/// `angle_at_zero` (rad) at t = 0 and a constant `angular_acceleration` (rad/s²).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_spin(
    graph: *mut rf_graph,
    parent: u32,
    axis: *const rf_vec3,
    rate: f64,
    angle_at_zero: f64,
    angular_acceleration: f64,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let axis: Vector3<f64> = unsafe { read(axis) }?.into();
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        let spin = Spin::new(axis, rate, angle_at_zero, angular_acceleration)?;
        let node = rf_graph_node {
            kind: rf_edge_kind::RF_EDGE_SPIN as u32,
            spin_axis: spin.axis().into(),
            spin_rate: spin.rate(),
            spin_angle_at_zero: spin.angle_at_zero(),
            spin_angular_acceleration: spin.angular_acceleration(),
            ..Default::default()
        };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds the Earth-fixed frame (ECEF) turning relative to `parent` (an inertial frame) at the
/// rate of `model`, with rotation angle `angle_at_epoch` (rad) at t = 0 (for a UT1 epoch, pass
/// its `rf_earth_rotation_angle`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_earth(
    graph: *mut rf_graph,
    parent: u32,
    model: *const rf_earth_model,
    angle_at_epoch: f64,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?;
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        let earth = EarthRotation::with_angle(m.to_core()?, angle_at_epoch)?;
        let node = rf_graph_node {
            kind: rf_edge_kind::RF_EDGE_EARTH as u32,
            model: m,
            earth_angle_at_epoch: earth.angle_at_epoch(),
            ..Default::default()
        };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds a local-level frame (`axes` an `rf_local_axes` value) at the fixed geodetic `position`
/// of `parent` (an Earth-fixed frame).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_site(
    graph: *mut rf_graph,
    parent: u32,
    model: *const rf_earth_model,
    position: *const rf_geodetic,
    axes: u32,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?.to_core()?;
        let p: Geodetic = unsafe { read(position) }?.into();
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        let axes = match rf_local_axes::from_u32(axes) {
            Some(rf_local_axes::RF_AXES_NED) => LocalAxes::Ned,
            Some(rf_local_axes::RF_AXES_ENU) => LocalAxes::Enu,
            None => {
                return Err(rotaframe::Error::OutOfRange { quantity: "axes", value: f64::from(axes), min: 0.0, max: 1.0 }.into());
            }
        };
        let site = Site::new(m, p, axes)?;
        let node =
            rf_graph_node { kind: rf_edge_kind::RF_EDGE_SITE as u32, motion: (&site.motion()).into(), ..Default::default() };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds a frame moving as the caller's geodetic samples say (`count` ≥ 3; body-to-NED
/// attitudes), relative to `parent`, which must be an Earth-fixed frame (an Earth edge). The
/// samples are checked here and kept by pointer: they must stay valid and unchanged.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_samples_geodetic(
    graph: *mut rf_graph,
    parent: u32,
    model: *const rf_earth_model,
    samples: *const rf_recorded_sample,
    count: usize,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let m = unsafe { read(model) }?;
        let list = unsafe { slice(samples, count) }?;
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        let frames = unsafe { graph.frames() }?;
        if frames.get(parent as usize).is_none_or(|n| rf_edge_kind::from_u32(n.kind) != Some(rf_edge_kind::RF_EDGE_EARTH)) {
            return Err(
                rotaframe::Error::Invalid { quantity: "parent", reason: "geodetic samples need an Earth-fixed parent" }.into()
            );
        }
        SampledMotion::new(GeodeticPoses { model: m.to_core()?, source: RecordArray(list) })?;
        let node = rf_graph_node {
            kind: rf_edge_kind::RF_EDGE_SAMPLES_GEODETIC as u32,
            model: m,
            samples: samples.cast(),
            sample_count: count,
            ..Default::default()
        };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds a frame moving as the caller's Cartesian samples say (`count` ≥ 3; positions in the
/// parent, child-to-parent attitudes). Checked here, kept by pointer.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_samples_cartesian(
    graph: *mut rf_graph,
    parent: u32,
    samples: *const rf_pose_sample,
    count: usize,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let list = unsafe { slice(samples, count) }?;
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        SampledMotion::new(PoseArray(list))?;
        let node = rf_graph_node {
            kind: rf_edge_kind::RF_EDGE_SAMPLES_CARTESIAN as u32,
            samples: samples.cast(),
            sample_count: count,
            ..Default::default()
        };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// Adds a frame whose motion relative to `parent` the caller's `function` writes for any time
/// (called with `context`).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_add_function(
    graph: *mut rf_graph,
    parent: u32,
    function: rf_edge_motion_fn,
    context: *mut c_void,
    out_frame: *mut u32,
) -> rf_status {
    boundary(|| {
        let (graph, out_frame) = (unsafe { out(graph) }?, unsafe { out(out_frame) }?);
        function.ok_or(crate::status::RF_STATUS_NULL_POINTER)?;
        let node = rf_graph_node { kind: rf_edge_kind::RF_EDGE_FUNCTION as u32, function, context, ..Default::default() };
        *out_frame = unsafe { graph.push(parent, node) }?;
        Ok(())
    })
}

/// The motion of frame `child` relative to frame `parent` at `time` (s).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_motion(
    graph: *const rf_graph,
    parent: u32,
    child: u32,
    time: f64,
    out_motion: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let g = unsafe { read(graph) }?;
        let frames = unsafe { g.frames() }?;
        let out_motion = unsafe { out(out_motion) }?;
        let mut result = Motion::identity();
        motions(frames, parent, child, &[time], |_, m| result = m)?;
        *out_motion = (&result).into();
        Ok(())
    })
}

/// The motions of `child` relative to `parent` at `count` times, written to `out_motions`
/// (which must not overlap `times`). On error nothing is written: the motions are computed
/// once to check and once to write (function edges are called twice per time). A function
/// edge that fails only on the second call (one that is not deterministic) leaves every
/// output a NaN motion, never a partial result.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_motion_batch(
    graph: *const rf_graph,
    parent: u32,
    child: u32,
    times: *const f64,
    count: usize,
    out_motions: *mut rf_frame_motion,
) -> rf_status {
    boundary(|| {
        let g = unsafe { read(graph) }?;
        let frames = unsafe { g.frames() }?;
        let times = unsafe { slice(times, count) }?;
        disjoint(region(out_motions, count), &[region(times.as_ptr(), count), region(g.nodes.cast_const(), g.count)])?;
        let outs = unsafe { slice_mut(out_motions, count) }?;
        motions(frames, parent, child, times, |_, _| {})?;
        let written = motions(frames, parent, child, times, |i, m| outs[i] = (&m).into());
        if written.is_err() {
            // Only a function edge that answers differently the second time fails here: no
            // partial result is left, every output becomes a NaN motion.
            let nan = rf_vec3 { x: f64::NAN, y: f64::NAN, z: f64::NAN };
            let rotation = rf_quat { w: f64::NAN, x: f64::NAN, y: f64::NAN, z: f64::NAN };
            let poison = rf_frame_motion {
                rotation,
                position: nan,
                velocity: nan,
                acceleration: nan,
                angular_velocity: nan,
                angular_acceleration: nan,
            };
            outs.fill(poison);
        }
        written
    })
}

/// The apparent accelerations, resolved in `frame`, on a point moving relative to it
/// (`point`: position and velocity relative to and resolved in `frame`) at `time`, from the
/// frame's motion relative to the root, which must be inertial (`RF_STATUS_INVALID_ARGUMENT`
/// otherwise).
#[unsafe(no_mangle)]
pub unsafe extern "C" fn rf_graph_apparent(
    graph: *const rf_graph,
    frame: u32,
    time: f64,
    point: *const rf_point_kinematics,
    out_terms: *mut rf_apparent_terms,
) -> rf_status {
    boundary(|| {
        let g = unsafe { read(graph) }?;
        let frames = unsafe { g.frames() }?;
        let p = unsafe { read(point) }?.to_core()?;
        let out_terms = unsafe { out(out_terms) }?;
        if g.root_inertial == 0 {
            return Err(RF_STATUS_INVALID_ARGUMENT);
        }
        let mut m = Motion::identity();
        motions(frames, 0, frame, &[time], |_, x| m = x)?;
        let dynamics = rotaframe::apparent::FrameDynamics::of_motion(
            &m.assume_frames::<rotaframe::frames::Eci, rotaframe::frames::AnyFrame>(),
        );
        *out_terms = (&rotaframe::apparent::apparent_terms(&dynamics, &p.position, &p.velocity)).into();
        Ok(())
    })
}

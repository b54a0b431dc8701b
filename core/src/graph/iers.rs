//! The frame graph's full-model Earth edge: ITRS relative to GCRS by the IERS
//! celestial-to-terrestrial transformation ([`itrs_motion`]), with the graph's time `t` in
//! seconds of TT after a stated epoch and the Earth orientation data from an
//! [`EarthOrientation`] table.

use super::Motion;
use crate::earth::celestial::itrs_motion;
use crate::error::Result;
use crate::limits;
use crate::time::{EarthOrientation, JulianDate};

/// ITRS relative to GCRS at `t` seconds of TT after `epoch_tt`, with `eop`'s `UT1 − UTC`, polar
/// motion and celestial pole offsets (see [`itrs_motion`]).
///
/// ```
/// use rotaframe::graph::{FrameGraph, IersEarth};
/// use rotaframe::time::{EarthOrientation, JulianDate};
/// # fn main() -> Result<(), Box<dyn std::error::Error>> {
/// // Invented Earth orientation rows around 2023-02-25.
/// let mjd = [59_998.0, 59_999.0, 60_000.0, 60_001.0, 60_002.0];
/// let eop = EarthOrientation::new(&mjd, &[-0.0184, -0.0188, -0.0192, -0.0196, -0.0200], &[5e-7; 5], &[1.5e-6; 5], None)?;
/// let mut g = FrameGraph::new("gcrs", true);
/// g.add_earth_iers("itrs", "gcrs", IersEarth::new(JulianDate::new(2_460_000.5, 0.0)?, eop)?)?;
/// let m = g.motion("gcrs", "itrs", 3_600.0)?; // one hour of TT after the epoch
/// assert!((m.angular_velocity().norm() - 7.2921151e-5).abs() < 1e-10);
/// # Ok(())
/// # }
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct IersEarth {
    epoch_tt: JulianDate,
    eop: EarthOrientation,
}

impl IersEarth {
    /// The edge with `t = 0` at the TT date `epoch_tt`, using `eop`.
    ///
    /// # Errors
    /// As [`itrs_motion`] at the epoch (a date outside the table, say).
    pub fn new(epoch_tt: JulianDate, eop: EarthOrientation) -> Result<Self> {
        let edge = IersEarth { epoch_tt: JulianDate::new(epoch_tt.jd, epoch_tt.fraction)?, eop };
        edge.motion_at(0.0)?;
        Ok(edge)
    }

    /// The TT date of `t = 0`.
    #[must_use]
    pub fn epoch_tt(&self) -> JulianDate {
        self.epoch_tt
    }

    /// The Earth orientation table.
    #[must_use]
    pub fn eop(&self) -> &EarthOrientation {
        &self.eop
    }

    /// The motion at `time` seconds of TT after the epoch.
    ///
    /// # Errors
    /// [`Error::BeyondLimit`](crate::Error::BeyondLimit) naming `time`; as [`itrs_motion`].
    pub fn motion_at(&self, time: f64) -> Result<Motion> {
        limits::check_scalar(time, limits::MAX_TIME, "s", "time")?;
        let tt = JulianDate { jd: self.epoch_tt.jd, fraction: self.epoch_tt.fraction + time / 86_400.0 };
        Ok(itrs_motion(tt, &self.eop.view())?.erase_frames())
    }
}

"""Plots of rotaframe results (optional: needs matplotlib, ``pip install rotaframe[plot]``).

``import rotaframe`` never imports this module or matplotlib; ``import rotaframe.plot`` does
not import matplotlib either until a plot is drawn, so a headless worker can import it freely.
Every function draws into a new figure (or the ``ax`` given), labels its axes with units and
returns the ``matplotlib.figure.Figure``; nothing is shown or saved unless you do it
(``fig.savefig("budget.png")``).

* :func:`budget_plot`: the apparent-acceleration terms of a run against time, as stacked
  magnitudes (m/s²) with the magnitude of their sum on top.
* :func:`drift_plot`: an INS's horizontal and vertical position error (m) and velocity error
  (m/s) against time, optionally with 1σ bands from ``predict_covariance``, and the Schuler
  period ``2π √(R / g)`` marked (R the Gaussian mean radius of curvature and g normal
  gravity at the latitude given; 84.4 min near mid-latitudes, Titterton and Weston ch. 12).
"""

from __future__ import annotations

from typing import Any, Optional, Sequence

import numpy as np

from . import _native

__all__ = ["TERM_NAMES", "budget_plot", "drift_plot", "schuler_period"]

#: The terms of :class:`rotaframe.ApparentAcceleration`, in the order they are stacked.
TERM_NAMES = ("translational", "coriolis", "centrifugal", "euler")


def _pyplot() -> Any:
    try:
        import matplotlib.pyplot as plt
    except ImportError as error:  # pragma: no cover - exercised only without matplotlib
        raise ImportError("rotaframe.plot needs matplotlib: pip install 'rotaframe[plot]' (or matplotlib)") from error
    return plt


def _axes(ax: Any, rows: int = 1) -> tuple[Any, Sequence[Any]]:
    if ax is not None:
        axes = list(ax) if isinstance(ax, (list, tuple, np.ndarray)) else [ax]
        if len(axes) != rows:
            raise ValueError(f"`ax` must hold {rows} axes, got {len(axes)}")
        return axes[0].figure, axes
    plt = _pyplot()
    fig, axes = plt.subplots(rows, 1, sharex=True, figsize=(8, 3 + 2 * rows), squeeze=False)
    return fig, list(axes[:, 0])


def schuler_period(lat: float, *, h: float = 0.0, degrees: bool = False, model: Optional[Any] = None) -> float:
    """The Schuler period (s) at geodetic latitude ``lat``: ``2π √(R / g)`` with ``R = √(M N) + h``
    from the radii of curvature and ``g`` normal gravity, both from ``model`` (WGS 84 by
    default). About 5067 s (84.5 min) at 45°. The same as :func:`rotaframe.schuler_period`
    (the core's ``earth::schuler_period``) for one latitude."""
    return float(_native.schuler_period(lat, h, model=model, degrees=degrees))


def budget_plot(t: Any, terms: Any, *, ax: Any = None, title: Optional[str] = None, time_unit: str = "s") -> Any:
    """The apparent-acceleration budget of a run: ``t`` (N,) seconds and ``terms`` an
    :class:`rotaframe.ApparentAcceleration` of arrays (N, 3) (m/s²). Draws the magnitudes of
    the translational, Coriolis, centrifugal and Euler terms stacked (one filled band each, in
    that order) and the magnitude of their vector sum as a line, so that a term that cancels
    another shows as a total below the stack. ``time_unit`` is "s", "min" or "h"."""
    scale = {"s": 1.0, "min": 60.0, "h": 3600.0}[time_unit]
    t = np.asarray(t, dtype=float) / scale
    magnitudes = [np.linalg.norm(np.asarray(getattr(terms, name), dtype=float), axis=-1) for name in TERM_NAMES]
    if any(m.shape != t.shape for m in magnitudes):
        raise ValueError(f"`terms` must hold one (3,) vector per time in `t` {t.shape}")
    fig, (axis,) = _axes(ax)
    labels = ["translational", "Coriolis", "centrifugal", "Euler"]
    axis.stackplot(t, *magnitudes, labels=labels, alpha=0.8)
    total = np.linalg.norm(np.asarray(terms.total, dtype=float), axis=-1)
    axis.plot(t, total, color="black", linewidth=1.2, label="|total|")
    axis.set_xlabel(f"time ({time_unit})")
    axis.set_ylabel("apparent acceleration magnitude (m/s²)")
    axis.set_xlim(t[0], t[-1])
    axis.set_ylim(bottom=0.0)
    axis.legend(loc="upper left", fontsize="small")
    axis.set_title(title or "apparent-acceleration budget (terms stacked)")
    return fig


def drift_plot(
    t: Any,
    position_error: Any,
    velocity_error: Any,
    *,
    position_sigma: Any = None,
    velocity_sigma: Any = None,
    lat: Optional[float] = None,
    degrees: bool = False,
    ax: Any = None,
    title: Optional[str] = None,
) -> Any:
    """INS drift against time: ``t`` (N,) seconds, ``position_error`` and ``velocity_error``
    (N, 3) NED errors (m, m/s). The top axes show the horizontal error ``√(N² + E²)`` and the
    vertical error ``|D|``, the bottom axes the same for velocity; ``position_sigma`` and
    ``velocity_sigma`` (N, 3) 1σ values (from ``predict_covariance``) draw the horizontal
    ``√(σ_N² + σ_E²)`` as a dashed line. With ``lat`` the Schuler period at that latitude is
    marked by dotted vertical lines at each multiple within the run. Time is shown in minutes."""
    minutes = np.asarray(t, dtype=float) / 60.0
    fig, (top, bottom) = _axes(ax, rows=2)
    for axis, error, sigma, unit, what in (
        (top, position_error, position_sigma, "m", "position"),
        (bottom, velocity_error, velocity_sigma, "m/s", "velocity"),
    ):
        error = np.asarray(error, dtype=float)
        if error.shape != minutes.shape + (3,):
            raise ValueError(f"`{what}_error` must have shape {minutes.shape + (3,)}, got {error.shape}")
        axis.plot(minutes, np.hypot(error[:, 0], error[:, 1]), label=f"horizontal {what} error")
        axis.plot(minutes, np.abs(error[:, 2]), label=f"vertical {what} error")
        if sigma is not None:
            sigma = np.asarray(sigma, dtype=float)
            axis.plot(minutes, np.hypot(sigma[:, 0], sigma[:, 1]), linestyle="--", color="grey", label="horizontal 1σ (predicted)")
        axis.set_ylabel(f"{what} error ({unit})")
        axis.set_ylim(bottom=0.0)
        axis.legend(loc="upper left", fontsize="small")
    if lat is not None:
        period = schuler_period(lat, degrees=degrees) / 60.0
        k = 1
        while k * period <= minutes[-1]:
            for axis in (top, bottom):
                axis.axvline(k * period, color="black", linestyle=":", linewidth=1.0)
            k += 1
        top.text(0.99, 0.97, f"Schuler period {period:.1f} min (dotted)", transform=top.transAxes, ha="right", va="top", fontsize="small")
    bottom.set_xlabel("time (min)")
    bottom.set_xlim(minutes[0], minutes[-1])
    top.set_title(title or "INS drift")
    return fig

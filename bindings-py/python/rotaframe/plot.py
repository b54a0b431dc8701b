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
  gravity at the latitude given; 84.5 min at 45°, Titterton and Weston ch. 12).
* :func:`aided_plot`: an aided run's horizontal and vertical position 1σ (m) against time,
  with the error against a reference trajectory when one is given and GNSS outages shaded.
* :func:`error_budget_plot`: an ``AidedResult.budget``: the 1σ each source of error contributes
  to a group of states against time, and each source's share of the variance, stacked.
"""

from __future__ import annotations

from typing import Any, Optional, Sequence

import numpy as np

from . import _native

__all__ = ["TERM_NAMES", "aided_plot", "budget_plot", "drift_plot", "error_budget_plot", "schuler_period"]

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
            raise _native.ShapeError(f"`ax` must hold {rows} axes, got {len(axes)}")
        return axes[0].figure, axes
    plt = _pyplot()
    fig, axes = plt.subplots(rows, 1, sharex=True, figsize=(8, 3 + 2 * rows), squeeze=False)
    return fig, list(axes[:, 0])


def _times(t: Any) -> Any:
    """``t`` as a finite, non-decreasing 1-D float array of at least one value."""
    try:
        times = np.asarray(t, dtype=float)
    except (TypeError, ValueError) as error:
        raise _native.InputTypeError(f"`t` must be an array of numbers (s), got {type(t).__name__}") from error
    if times.ndim != 1 or times.size == 0:
        raise _native.ShapeError(f"`t` must have shape (N,) with N ≥ 1, got {times.shape}")
    if not np.all(np.isfinite(times)):
        raise _native.NonFiniteError("`t` must be finite")
    if np.any(np.diff(times) < 0):
        raise _native.RotaframeError("`t` must not decrease")
    return times


def _rows(value: Any, name: str, n: int) -> Any:
    """``value`` as an (n, 3) float array named ``name`` in errors."""
    try:
        rows = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as error:
        raise _native.InputTypeError(f"`{name}` must be an array of numbers, got {type(value).__name__}") from error
    if rows.shape != (n, 3):
        raise _native.ShapeError(f"`{name}` must have shape {(n, 3)} (one row per time in `t`), got {rows.shape}")
    return rows


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
    scales = {"s": 1.0, "min": 60.0, "h": 3600.0}
    if time_unit not in scales:
        raise _native.RotaframeError(f"`time_unit` must be one of 's', 'min' or 'h', got {time_unit!r}")
    t = _times(t) / scales[time_unit]
    missing = [name for name in TERM_NAMES + ("total",) if not hasattr(terms, name)]
    if missing:
        raise _native.InputTypeError(f"`terms` must be an ApparentAcceleration (it has no {', '.join(missing)}), got {type(terms).__name__}")
    magnitudes = [np.linalg.norm(_rows(getattr(terms, name), f"terms.{name}", t.size), axis=-1) for name in TERM_NAMES]
    fig, (axis,) = _axes(ax)
    labels = ["translational", "Coriolis", "centrifugal", "Euler"]
    axis.stackplot(t, *magnitudes, labels=labels, alpha=0.8)
    total = np.linalg.norm(_rows(terms.total, "terms.total", t.size), axis=-1)
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
    minutes = _times(t) / 60.0
    n = minutes.size
    arrays = [
        (_rows(position_error, "position_error", n), None if position_sigma is None else _rows(position_sigma, "position_sigma", n)),
        (_rows(velocity_error, "velocity_error", n), None if velocity_sigma is None else _rows(velocity_sigma, "velocity_sigma", n)),
    ]
    period = None if lat is None else schuler_period(lat, degrees=degrees) / 60.0
    fig, (top, bottom) = _axes(ax, rows=2)
    for axis, (error, sigma), unit, what in ((top, arrays[0], "m", "position"), (bottom, arrays[1], "m/s", "velocity")):
        axis.plot(minutes, np.hypot(error[:, 0], error[:, 1]), label=f"horizontal {what} error")
        axis.plot(minutes, np.abs(error[:, 2]), label=f"vertical {what} error")
        if sigma is not None:
            axis.plot(minutes, np.hypot(sigma[:, 0], sigma[:, 1]), linestyle="--", color="grey", label="horizontal 1σ (predicted)")
        axis.set_ylabel(f"{what} error ({unit})")
        axis.set_ylim(bottom=0.0)
        axis.legend(loc="upper left", fontsize="small")
    if period is not None:
        # One line per whole period within the run: at most one per data point (a run far
        # longer than its samples would otherwise draw millions of lines).
        count = min(int(minutes[-1] // period), n)
        for k in range(1, count + 1):
            for axis in (top, bottom):
                axis.axvline(k * period, color="black", linestyle=":", linewidth=1.0)
        top.text(0.99, 0.97, f"Schuler period {period:.1f} min (dotted)", transform=top.transAxes, ha="right", va="top", fontsize="small")
    bottom.set_xlabel("time (min)")
    bottom.set_xlim(minutes[0], minutes[-1])
    top.set_title(title or "INS drift")
    return fig


def aided_plot(
    result: Any,
    *,
    truth: Any = None,
    outages: Sequence[tuple[float, float]] = (),
    degrees: bool = False,
    model: Optional[Any] = None,
    ax: Any = None,
    title: Optional[str] = None,
) -> Any:
    """An ``AidedNavigator.run`` result against time: the top axes show the horizontal
    position 1σ ``√(σ_N² + σ_E²)`` (m, from the latitude and longitude σ scaled by the radii
    of curvature) and, with ``truth = (lat, lon, h)`` (arrays at the result's times, angles as
    ``degrees``), the horizontal error; the bottom axes the same for height. ``outages`` are
    ``(start, end)`` times (s) shaded grey (the GNSS gaps of the run). ``degrees`` says whether
    ``result.lat`` is in degrees (a strapdown made with ``degrees=True``). A result of
    ``run(..., smooth=True)`` draws the smoothed solution's error and 1σ beside the filter's.
    Time in seconds."""
    t = _times(result.t)
    scale = np.pi / 180.0 if degrees else 1.0
    if truth is not None:
        if len(truth) != 3:
            raise _native.ShapeError("`truth` must be (lat, lon, h)")
        truth = tuple(np.asarray(x, dtype=float) for x in truth)
        if any(x.shape != t.shape for x in truth):
            raise _native.ShapeError(f"`truth` arrays must have shape {t.shape} (one value per time of the result)")
    fig, (top, bottom) = _axes(ax, rows=2)
    solutions = [("filter", result, "grey", "C0")]
    if getattr(result, "smoothed", None) is not None:
        solutions.append(("smoothed", result.smoothed, "black", "C1"))
    for name, solution, sigma_colour, error_colour in solutions:
        lat = np.asarray(solution.lat, dtype=float) * scale
        meridian, prime = _native.radii_of_curvature(lat, model=model)
        h = np.asarray(solution.h, dtype=float)
        sigma = np.asarray(solution.sigma, dtype=float)
        north_sigma = sigma[:, 0] * (meridian + h)
        east_sigma = sigma[:, 1] * (prime + h) * np.cos(lat)
        top.plot(t, np.hypot(north_sigma, east_sigma), linestyle="--", color=sigma_colour, label=f"horizontal 1σ ({name})")
        bottom.plot(t, sigma[:, 2], linestyle="--", color=sigma_colour, label=f"height 1σ ({name})")
        if truth is not None:
            true_lat, true_lon, true_h = truth
            north = (lat - true_lat * scale) * (meridian + h)
            east = (np.asarray(solution.lon, dtype=float) - true_lon) * scale * (prime + h) * np.cos(lat)
            top.plot(t, np.hypot(north, east), color=error_colour, label=f"horizontal error ({name})")
            bottom.plot(t, np.abs(h - true_h), color=error_colour, label=f"height error ({name})")
    for start, end in outages:
        for axis in (top, bottom):
            axis.axvspan(start, end, color="grey", alpha=0.2, linewidth=0)
    top.set_ylabel("position (m)")
    bottom.set_ylabel("height (m)")
    for axis in (top, bottom):
        axis.set_ylim(bottom=0.0)
        axis.legend(loc="upper left", fontsize="small")
    bottom.set_xlabel("time (s)")
    bottom.set_xlim(t[0], t[-1])
    top.set_title(title or "Aided navigation: error and 1σ" + (" (GNSS outages shaded)" if outages else ""))
    return fig


def error_budget_plot(
    budget: Any,
    *,
    smoothed: Optional[bool] = None,
    scale: Optional[Sequence[float]] = None,
    unit: str = "state units",
    outages: Sequence[tuple[float, float]] = (),
    top: int = 6,
    ax: Any = None,
    title: Optional[str] = None,
) -> Any:
    """An error budget (``AidedResult.budget``) against time, for the sum of its states' variances:
    the top axes show the total 1σ and the 1σ of the ``top`` sources that contribute most; the
    bottom axes each source's share of the variance (%), stacked, the rest summed as "other".

    ``smoothed`` picks the smoothed budget (default when the budget has one) or the filtered;
    ``scale`` multiplies each state's σ (one factor per state of the budget, e.g. the meridian
    and prime-vertical radii of curvature for latitude and longitude, to sum a horizontal
    position in metres), ``unit`` names the unit of the result. ``outages`` are ``(start, end)``
    times (s) shaded grey. A negative part (the initial coupling between state groups, when the
    initial covariance has one) counts as zero in the shares. Time in seconds."""
    t = _times(budget.t)
    use_smoothed = budget.smoothed is not None if smoothed is None else smoothed
    if use_smoothed and budget.smoothed is None:
        raise _native.RotaframeError("this budget has no smoothed part: the run was not smoothed")
    parts = np.asarray(budget.smoothed if use_smoothed else budget.filtered, dtype=float)
    if parts.ndim != 3 or parts.shape[0] != t.size:
        raise _native.ShapeError(f"the budget's parts must have shape (N, sources, states) with N = {t.size}, got {parts.shape}")
    factors = np.ones(parts.shape[2]) if scale is None else np.asarray(scale, dtype=float)
    if factors.shape != (parts.shape[2],):
        raise _native.ShapeError(f"`scale` must hold one factor per state of the budget ({parts.shape[2]}), got shape {factors.shape}")
    variances = np.einsum("tsj,j->ts", parts, factors * factors)
    total = variances.sum(axis=1)
    positive = np.clip(variances, 0.0, None)
    share = positive / np.where(total > 0.0, positive.sum(axis=1), 1.0)[:, None]
    order = np.argsort(-share.max(axis=0))
    shown = [int(i) for i in order[: max(1, top)]]
    names = list(budget.sources)
    fig, (upper, lower) = _axes(ax, rows=2)
    upper.plot(t, np.sqrt(np.clip(total, 0.0, None)), color="black", linewidth=1.4, label="total 1σ")
    for i in shown:
        upper.plot(t, np.sqrt(positive[:, i]), label=names[i])
    stacked = [100.0 * share[:, i] for i in shown]
    labels = [names[i] for i in shown]
    rest = [i for i in range(len(names)) if i not in shown]
    if rest:
        stacked.append(100.0 * share[:, rest].sum(axis=1))
        labels.append("other")
    lower.stackplot(t, *stacked, labels=labels, alpha=0.85)
    for start, end in outages:
        for axis in (upper, lower):
            axis.axvspan(start, end, color="grey", alpha=0.2, linewidth=0)
    upper.set_ylabel(f"1σ ({unit})")
    upper.set_ylim(bottom=0.0)
    lower.set_ylabel("share of the variance (%)")
    lower.set_ylim(0.0, 100.0)
    lower.set_xlabel("time (s)")
    lower.set_xlim(t[0], t[-1])
    upper.legend(loc="upper left", fontsize="x-small")
    lower.legend(loc="lower left", fontsize="x-small", framealpha=0.6)
    kind = "smoothed" if use_smoothed else "filtered"
    upper.set_title(title or f"Error budget by source ({kind})" + (" (GNSS outages shaded)" if outages else ""))
    return fig

"""Multi-bed converters: adiabatic beds in series with inter-bed cooling by exchanger or by quench.

``cooling="exchanger"``: the gas leaving each bed is cooled in an exchanger to the next bed's
inlet temperature; the duties are returned (heat that can raise steam or preheat feed).

``cooling="quench"``: part of the cold feed bypasses the first bed(s) and is mixed into the gas
between beds (cold-shot converters). The fractions of the feed sent to each mixing point are
solved so that every mixture reaches its bed inlet temperature; the first bed takes the rest of
the feed, preheated to its inlet temperature. The fractions are found by a damped fixed-point
iteration on the mixing enthalpy balances (bounded, a few iterations; each bed's outlet scales
with its flow, so the balances are nearly linear in the fractions). A bed outlet already colder
than the next inlet temperature cannot be quenched up to it: such members get a zero fraction and
their actual inlet temperature is reported.

Both modes run the whole batch through :func:`teakit.process.bed.run_bed`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from teakit.errors import InputError
from teakit.process.bed import MAX_VOLUME, run_bed
from teakit.process.streams import Stream, enthalpy_flow, mix
from teakit.validation import check_positive, check_range

__all__ = ["ConverterResult", "multibed"]


@dataclass(frozen=True)
class ConverterResult:
    """Outcome of :func:`multibed`.

    Attributes
    ----------
    outlet : Stream
        Gas leaving the last bed.
    beds : list of BedResult
        Each bed's result (profiles, peak temperature).
    interbed_duty : ndarray (B, n_beds - 1)
        Heat removed between beds [W] (zero for quench).
    quench_fraction : ndarray (B, n_beds - 1)
        Fraction of the converter feed sent to each mixing point [-] (zero for exchangers).
    preheat_duty : ndarray (B,)
        Heat to bring the first bed's share of the feed to its inlet temperature [W].
    """

    outlet: Stream
    beds: list
    interbed_duty: np.ndarray
    quench_fraction: np.ndarray
    preheat_duty: np.ndarray


def multibed(rate, feed: Stream, volumes, inlet_temperatures, *, nu, cooling: str = "exchanger",
             steps: int = 24, rate_params: dict | None = None, max_iter: int = 30) -> ConverterResult:
    """Adiabatic beds in series with inter-bed cooling, for a batch of converters.

    Parameters
    ----------
    rate : callable
        Rate law (see :func:`teakit.process.bed.run_bed`).
    feed : Stream
        Converter feed, before preheat (its temperature is the quench-gas temperature) [mol/s, K, Pa].
    volumes : array_like (B, n_beds) or (n_beds,)
        Catalyst volume of each bed [m3].
    inlet_temperatures : array_like (B, n_beds) or (n_beds,)
        Inlet temperature of each bed [K].
    nu : array_like (ns,)
        Stoichiometric coefficients [-].
    cooling : {"exchanger", "quench"}
    steps : int
        Integration steps per bed.
    rate_params : dict, optional
        Extra arguments of the rate law (e.g. ``activity`` arrays).
    max_iter : int
        Bound on the quench-fraction iteration.

    Returns
    -------
    ConverterResult
    """
    if cooling not in ("exchanger", "quench"):
        raise InputError(f"cooling must be 'exchanger' or 'quench', got {cooling!r}")
    if not isinstance(feed, Stream):
        raise InputError(f"feed must be a Stream, got {type(feed).__name__}")
    if isinstance(max_iter, bool) or not isinstance(max_iter, int | np.integer) or not 1 <= max_iter <= 1000:
        raise InputError(f"max_iter must be a whole number from 1 to 1000, got {max_iter!r}")
    B = len(feed)
    V0 = check_range("volumes", volumes, 0.0, MAX_VOLUME, "m3")
    T0 = check_positive("inlet_temperatures", inlet_temperatures, "K")
    if V0.ndim not in (1, 2) or V0.shape[-1] < 1 or T0.shape != V0.shape:
        raise InputError(f"volumes and inlet_temperatures need one entry per bed, shape (n_beds,) or (B, n_beds), "
                         f"got {V0.shape} and {T0.shape}")
    try:
        V = np.broadcast_to(V0, (B, V0.shape[-1]))
        Tin = np.broadcast_to(T0, V.shape)
    except ValueError:
        raise InputError(f"volumes and inlet_temperatures must have the batch size {B} in front, got {V0.shape}") from None
    nb = V.shape[1]
    feed.sset.check_T(Tin, "inlet_temperatures")
    sset = feed.sset
    if cooling == "exchanger" or nb == 1:  # one bed: no mixing point, nothing to quench
        s = feed.at(T=Tin[:, 0])
        beds, duty = [], []
        for j in range(nb):
            if j > 0:
                cooled = s.at(T=Tin[:, j])
                duty.append(enthalpy_flow(s.n, s.T, sset) - enthalpy_flow(cooled.n, cooled.T, sset))
                s = cooled
            beds.append(run_bed(rate, s, V[:, j], nu=nu, steps=steps, rate_params=rate_params))
            s = beds[-1].outlet
        pre = enthalpy_flow(feed.n, Tin[:, 0], sset) - feed.H
        zeros = np.zeros((B, max(nb - 1, 0)))
        return ConverterResult(s, beds, np.stack(duty, axis=-1) if duty else zeros, zeros, pre)
    # Quench: fractions q_j of the feed to the mixing point before bed j (j = 1..nb-1).
    q = np.full((B, nb - 1), 0.1 / max(nb - 1, 1))
    for _ in range(max_iter):
        beds, q_new = _quench_pass(rate, feed, V, Tin, q, nu, steps, rate_params)
        if np.max(np.abs(q_new - q)) < 1e-10:
            q = q_new
            break
        q = 0.5 * q + 0.5 * q_new
    beds, _ = _quench_pass(rate, feed, V, Tin, q, nu, steps, rate_params)
    main = feed.scaled(1.0 - q.sum(axis=-1))
    pre = enthalpy_flow(main.n, Tin[:, 0], sset) - main.H
    return ConverterResult(beds[-1].outlet, beds, np.zeros((B, nb - 1)), q, pre)


def _quench_pass(rate, feed, V, Tin, q, nu, steps, rate_params):
    """Run the beds with quench fractions q; return the beds and the fractions that would make
    every mixture reach its inlet temperature given this pass's bed outlets."""
    sset = feed.sset
    nb = V.shape[1]
    s = feed.scaled(1.0 - q.sum(axis=-1)).at(T=Tin[:, 0])
    beds = []
    q_new = np.zeros_like(q)
    for j in range(nb):
        if j > 0:
            hot = beds[-1].outlet
            # Fraction f of feed (cold, at feed.T) that brings the mixture to Tin[:, j]:
            # H_hot(T_hot) - H_hot(T_in) = f [H_feed(T_in) - H_feed(T_feed)] per unit feed.
            need = enthalpy_flow(hot.n, hot.T, sset) - enthalpy_flow(hot.n, Tin[:, j], sset)
            per = enthalpy_flow(feed.n, Tin[:, j], sset) - feed.H
            q_new[:, j - 1] = np.clip(need / np.maximum(per, 1e-300), 0.0, 0.9)
            s = mix(hot, feed.scaled(q[:, j - 1]), P=hot.P)
        beds.append(run_bed(rate, s, V[:, j], nu=nu, steps=steps, rate_params=rate_params))
    # The first bed's share must stay positive.
    total = q_new.sum(axis=-1, keepdims=True)
    q_new = np.where(total > 0.9, q_new * 0.9 / np.maximum(total, 1e-300), q_new)
    return beds, q_new



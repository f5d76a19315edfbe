"""The hybrid driver with the stepper a scenario's ``simulation`` settings ask for (the compiled stepper, the
reference taking over where it cannot go on), and each stepper on its own for tests and validation cases."""

from __future__ import annotations

import numpy as np

from atticsim.hybrid.compiled import CompiledStepper
from atticsim.hybrid.driver import HybridRun, simulate_hybrid
from atticsim.hybrid.reference import ReferenceStepper


def integrate(network, forcing, controller, t_start, t_end, y0, output_times, simulation,
              progress=None, cancel=None) -> HybridRun:
    """:func:`simulate_hybrid` with the stepper the scenario's ``simulation`` settings ask for: the compiled
    stepper (``solver = "fast"``; the reference takes over where it cannot go on, or when the outputs are
    not on one regular grid) or the reference stepper (``"reference"``); ``progress`` and ``cancel`` as there."""
    out = np.ascontiguousarray(output_times, dtype=float)
    out_y = np.empty((len(y0), out.size))

    def reference(rows):
        return ReferenceStepper(network, forcing, out, rows, rtol=simulation.rtol, max_step=simulation.max_step)

    if simulation.solver != "fast":
        return simulate_hybrid(network, forcing, controller, t_start, t_end, y0, out, reference(out_y),
                               progress=progress, cancel=cancel)
    try:
        stepper = CompiledStepper(network, forcing, out, out_y, tol=simulation.fast_tolerance,
                                  check_step=min(60.0, simulation.max_step))
    except ValueError as exc:
        run = simulate_hybrid(network, forcing, controller, t_start, t_end, y0, out, reference(out_y),
                              progress=progress, cancel=cancel)
        run.notes.append(f"the reference solver ran: {exc}")
        return run
    return simulate_hybrid(network, forcing, controller, t_start, t_end, y0, out, stepper, fallback=reference,
                           progress=progress, cancel=cancel)


def run_fast(network, forcing, t_start, t_end, y0, output_times, controller=None, **settings) -> HybridRun:
    """:func:`simulate_hybrid` with the compiled stepper alone (``settings`` as
    :class:`atticsim.hybrid.compiled.CompiledStepper` takes them), for tests and the validation cases."""
    out = np.ascontiguousarray(output_times, dtype=float)
    stepper = CompiledStepper(network, forcing, out, np.empty((len(y0), out.size)), **settings)
    return simulate_hybrid(network, forcing, controller, t_start, t_end, y0, out, stepper)


def run_reference(network, forcing, t_start, t_end, y0, output_times, controller=None, rtol=1e-6,
                  max_step=300.0) -> HybridRun:
    """:func:`simulate_hybrid` with the reference (LSODA) stepper, for tests and the validation cases."""
    out = np.ascontiguousarray(output_times, dtype=float)
    stepper = ReferenceStepper(network, forcing, out, np.empty((len(y0), out.size)), rtol=rtol, max_step=max_step)
    return simulate_hybrid(network, forcing, controller, t_start, t_end, y0, out, stepper)

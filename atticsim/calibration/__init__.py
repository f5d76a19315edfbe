"""Calibration: fit a scenario's uncertain keys to a measured attic, and infer a sensor's lag on the bench.

- :mod:`~atticsim.calibration.measured`: the logger file (time-stamped readings of the attic, the sensor, the
  deck, the fan's state and the outdoor air), checked and put on the weather's clock;
- :mod:`~atticsim.calibration.keys`: the keys a fit may adjust, their default bounds and scales;
- :mod:`~atticsim.calibration.fit`: the least-squares fit (scipy's ``least_squares``, parallel finite-difference
  Jacobian columns), its intervals corrected for autocorrelated residuals, correlations and goodness of fit;
- :mod:`~atticsim.calibration.bench`: the sensor's still-air time constant from a timed run-on on the bench;
- :mod:`~atticsim.calibration.plots`, :mod:`~atticsim.calibration.page`: the fit's figures and report page.

Nothing heavy is imported here: the modules load numpy, pandas and scipy themselves.
"""

from atticsim.calibration.errors import CalibrationError

__all__ = ["CalibrationError"]

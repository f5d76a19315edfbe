"""What every stepper of the hybrid driver shares: the interface (see :mod:`atticsim.hybrid.driver`) and the
signal that it cannot go on."""


class StepperFailed(RuntimeError):
    """A stepper could not advance (its reason in the message) from ``t`` [s], the output row ``k`` next; the
    state it was given is left at t. The loop hands over to the fallback stepper."""

    def __init__(self, reason, t, k):
        super().__init__(reason)
        self.t, self.k = t, k

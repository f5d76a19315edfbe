"""Safety cautions shown in the README, in reports and wherever the tool checks a circuit."""

from atticsim.circuit.mains import MAINS_CAUTION

#: One mains caution for the whole tool (the circuit checks print the same text).
MAINS = MAINS_CAUTION
DEPRESSURISATION = ("House depressurisation: a powered attic fan can pull conditioned air and flue gases "
                    "from the house through ceiling leaks and backdraft atmospherically vented combustion "
                    "appliances (water heaters, furnaces). Provide ample intake vent area and have a "
                    "qualified person test for backdrafting.")
CODES = ("Results are engineering estimates from a simplified model; local building and electrical codes "
         "and licensed practice take precedence.")

ALL = (MAINS, DEPRESSURISATION, CODES)


def caution_text(width: int = 0) -> str:
    """The cautions as a block of text (bulleted)."""
    return "\n".join(f"! {c}" for c in ALL)

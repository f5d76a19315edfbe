"""Safety cautions shown in the README, in reports and wherever the tool checks a circuit."""

MAINS = ("Mains voltage: the thermostat circuit, its capacitive-dropper supply (which gives NO isolation), "
         "the triac and the fan motor are all at mains potential. Build, fit and test them only if you are "
         "qualified; follow local electrical codes and have the work checked by a licensed electrician.")
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

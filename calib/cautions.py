"""Safety cautions: the one text shown in reports, on the command line and in the README.

Plain strings, one short paragraph each, so every output prints the same words.
These are general workshop precautions (common practice, no source), not a risk
assessment of any particular setup.
"""

SUCTION_DEVICES = (
    "Do not leave a vacuum cleaner or fan running for long with its inlet blocked or heavily "
    "throttled by the fixture: many motors are cooled by the air they move and overheat when it "
    "stops. Watch the motor temperature, rely on a thermal cut-out, and never leave the setup "
    "running unattended."
)
MAINS_ELECTRICITY = (
    "Inspect cords and plugs before use, run mains-powered devices through RCD/GFCI protection, "
    "and unplug the device before fitting or changing a fixture."
)
ROTATING_PARTS = (
    "Keep fan impellers behind guards and keep fingers, hair, loose clothing and tools away from "
    "them; wait until the rotor has stopped before reaching in."
)
BAG_METHODS = (
    "With bag methods, secure the bag and keep loose debris out of the airstream: a bag pulled "
    "against an inlet or overfilled can burst and throw fragments or dust. Wear eye protection."
)
HEARING = (
    "Suction devices and fans can be loud at close range; wear hearing protection for long or "
    "repeated runs."
)
LIMITS_OF_RESULTS = (
    "airbias results are engineering estimates; they do not replace accredited calibration, "
    "the instrument maker's instructions, or local codes and standards."
)

CAUTIONS: tuple[str, ...] = (
    SUCTION_DEVICES,
    MAINS_ELECTRICITY,
    ROTATING_PARTS,
    BAG_METHODS,
    HEARING,
    LIMITS_OF_RESULTS,
)


def cautions_text(bullet: str = "- ") -> str:
    """All cautions as one block of text, one paragraph per line."""
    return "\n".join(bullet + caution for caution in CAUTIONS)

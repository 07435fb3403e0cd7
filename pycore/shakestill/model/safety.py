"""The safety cautions every report, reply and page shows with its numbers."""

CAUTIONS = (
    "A driven pendulum rig is reciprocating machinery: guard the drive and the whole space "
    "the pendulum can sweep, including a full turn, before running it.",
    "Wear eye protection. A bob, a clamp or a broken link can fly off at speed.",
    "Keep hands, hair and loose clothing out of the crank, the carriage and the joints: "
    "they are pinch points.",
    "Stop the drive and wait until everything has come to rest before touching the rig, "
    "adjusting a mass or freeing a jammed link.",
    "Bring the rig up to speed at low stroke first and compare it with these numbers: they "
    "come from a model of the rig, not from the rig itself.",
    "Local codes, your lab's safety rules and licensed professional practice come first; "
    "this tool does not replace a risk assessment.",
)

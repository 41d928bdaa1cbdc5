"""The cautions every output a person acts on carries with the safety and shipping figures."""

CAUTIONS = (
    "Swallowed magnets can pull through the gut walls: keep small magnets away from children, "
    "above all two or more, and treat a swallowed magnet as an emergency.",
    "Parts snap together and onto steel: keep fingers and skin out of the gap (pinching); "
    "assemble with fixtures and non-magnetic spacers.",
    "Sintered magnets are brittle: they chip or shatter when they strike each other or steel; "
    "wear eye protection.",
    "Keep the assembly outside the implant shell of anyone with a pacemaker, defibrillator or "
    "other implanted device.",
    "Heat, and for ferrite cold, and opposing fields demagnetise magnets; stay within the "
    "grade's working temperature.",
    "These figures are estimates from an idealised model: defer to local codes, the supplier's "
    "data and licensed practice, and measure before shipping.",
)
SHIPPING_NOTES = (
    "The regulation rests on a measurement at the stated distances: this is an estimate from "
    "the magnets' multipoles, not a substitute for it.",
    "A steel-lined package or steel keeper (which lowers the field) is not modelled.",
)

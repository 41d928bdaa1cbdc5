"""The look of trapscape's pictures, in one place.

Colours are chosen to survive colour-blindness and greyscale print: magnets are told apart by
lightness (north faces dark, south faces light, bodies mid grey) and by their N / S letters, not
by hue; equilibrium classes are told apart by marker shape first and by colours from the
Okabe-Ito palette second (Okabe & Ito, "Color Universal Design", 2002); field maps use cividis
(Nuñez, Anderton & Renslow, PLoS ONE 13, e0199239, 2018), perceptually uniform and readable by
viewers with colour-vision deficiency.
"""

NORTH_FACE = "#2e3a57"  # dark slate: lettered N in white
SOUTH_FACE = "#ece6d3"  # light sand: lettered S in near-black
MAGNET_BODY = "#a4a4a4"  # neutral grey
NORTH_LETTER = "#ffffff"
SOUTH_LETTER = "#1c1c1c"
ARROW = "#111111"
PLATE = "#6f7c88"
GHOST = "#8c8c8c"

FIELD_MAP = "cividis"
FIELD_LINE_2D = "#f4f4f4"  # light lines over the dark end of cividis, with a dark outline
FIELD_LINE_3D = "#3a3a3a"

MARKER = {  # class -> colour (Okabe-Ito); the shape carries the class in greyscale
    "stable": "#d55e00",  # vermillion, filled sphere
    "saddle": "#cc79a7",  # reddish purple, octahedron (diamond)
    "unstable": "#0072b2",  # blue, hollow ring (torus)
    "marginal": "#009e73",  # bluish green, cube
}
MARKER_SHAPE = {"stable": "sphere", "saddle": "diamond", "unstable": "ring", "marginal": "cube"}

WELL = "#e69f00"  # orange (Okabe-Ito), translucent
WELL_OPACITY = 0.35
WELL_EDGE = "#8a4b00"  # dark orange outline of flat wells
GUIDE = "#56b4e9"  # sky blue (Okabe-Ito)
HOVER = "#f0e442"  # yellow (Okabe-Ito)
FORCE = "#7b3294"  # purple: force arrows, apart from the black magnetisation arrows

BACKGROUND = "#ffffff"
TEXT = "#1c1c1c"

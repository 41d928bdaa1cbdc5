"""Forces on parts, pull on steel against the gap, plate saturation."""

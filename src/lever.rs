//! Lever geometry: the twist angle of the mirror from the spot's position along the scale.

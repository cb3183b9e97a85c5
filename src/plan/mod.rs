//! Apparatus planning: what a design will show before it is built, and torsion-fibre trials.

"""The broken phase: vacuum shifts, rotations to mass eigenstates, the mass spectrum and the derived gauge fixing (issue 10)."""

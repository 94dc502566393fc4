"""The broken phase: vacuum shifts, rotations to mass eigenstates and the mass spectrum (issue 10)."""

"""The Godunov step: EOS, reconstruction, Riemann solvers, CT, geometry, integrator."""

"""sub60 physics: electrostatics, confinement, band-to-band tunnelling and current of
thin-body tunnel FETs and their MOSFET twins. Pure numpy/scipy; no UI imports."""

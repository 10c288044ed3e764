"""sub60's package data: the explorer's stylesheet and the demo presets (our own
scenarios), read through `importlib.resources` so a wheel install finds them."""

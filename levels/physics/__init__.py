"""Pure physics: numpy/scipy functions on numbers and arrays; no store, no web."""

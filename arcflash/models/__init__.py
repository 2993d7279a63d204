"""Pure, vectorised models: numpy arrays in, arrays out; no I/O.

Each module implements one published method or physical concern and cites it.
"""

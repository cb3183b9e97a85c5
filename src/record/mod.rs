//! Live recording: the loop that reads a camera (or a replay), tracks the spot and writes the run as it goes.

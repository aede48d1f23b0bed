"""Flybys: the induced field anywhere, predictions along a track, responses fitted to magnetometer data."""

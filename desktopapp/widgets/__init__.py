"""Widgets shared by several views."""

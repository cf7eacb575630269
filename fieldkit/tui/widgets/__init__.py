"""Widgets of the fieldkit screens: each draws one thing from the diagnosis or the profile."""

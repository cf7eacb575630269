"""The screens of the fieldkit terminal UI."""

"""The screens of the carboy app, one module each."""

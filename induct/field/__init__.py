"""The driving field: the parent planet's internal field, its current sheet, the moon's orbit, line spectra, driving lines."""

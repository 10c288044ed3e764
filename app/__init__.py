"""sub60 app: the Panel explorer, plot builders, snapshots and the command line."""

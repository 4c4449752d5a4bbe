"""Reading project folders and writing results: the edge where units and files live."""

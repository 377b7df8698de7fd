"""Where checks run: pieces of a split check (pieces.py), their runners on this process, local worker
processes or a Dask cluster (distribute.py), and a killable child process for engines that cannot stop
themselves (isolation.py)."""

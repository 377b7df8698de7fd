"""Where checks run: pieces of a split check (pieces.py), their runners on this process, local worker
processes or a Dask cluster (distribute.py), a killable child process for engines that cannot stop
themselves (isolation.py), the one place child processes are started and ended (processes.py), and
SIGINT and SIGTERM as an interruption of the run (interrupts.py)."""

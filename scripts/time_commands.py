#!/usr/bin/env python3
"""Time whole processes side by side: `time_commands.py RUNS LABEL1 CMD1 LABEL2 CMD2 ...`.

Each command is a shell-free argument list given as one string (split on spaces; the working directory and
redirections are not interpreted). The runs alternate between the commands so that both see the same machine
state; stdout goes to /dev/null (the programs still format and write all of it). Prints the median wall time of
each and the ratio of the second to the first.
"""
import os
import statistics
import sys
import time


def run_once(argv):
    devnull = os.open(os.devnull, os.O_WRONLY)
    start = time.perf_counter()
    pid = os.posix_spawnp(argv[0], argv, os.environ, file_actions=[(os.POSIX_SPAWN_DUP2, devnull, 1), (os.POSIX_SPAWN_DUP2, devnull, 2)])
    _, status = os.waitpid(pid, 0)
    elapsed = time.perf_counter() - start
    os.close(devnull)
    return elapsed, os.waitstatus_to_exitcode(status)


def main():
    runs = int(sys.argv[1])
    pairs = list(zip(sys.argv[2::2], sys.argv[3::2]))
    times = {label: [] for label, _ in pairs}
    for _ in range(runs):
        for label, command in pairs:
            elapsed, code = run_once(command.split())
            if code not in (0, 1):
                sys.exit(f"{label}: exit code {code}")
            times[label].append(elapsed)
    medians = [statistics.median(times[label]) for label, _ in pairs]
    for (label, _), m in zip(pairs, medians):
        print(f"{label}: median {m * 1000:.2f} ms over {runs} runs")
    if len(medians) == 2:
        print(f"ratio ({pairs[1][0]} / {pairs[0][0]}): {medians[1] / medians[0]:.1f}")


if __name__ == "__main__":
    main()

"""Side-by-side start-up and round-trip times of the nudge kernel and ipykernel.

Usage: /usr/bin/python3 bench_kernels.py [--rounds N] [--starts M]
(with the nudge kernelspec on JUPYTER_PATH; `make bench-kernels` sets it up).

For each kernel, in one run on one machine:
  start-up   time from launching the kernel process to the first kernel_info reply
  round trip median time of a trivial execute_request until its execute_reply and
             the idle status on iopub
Prints the medians and the ratios nudge / ipykernel.
"""
import argparse
import statistics
import sys
import time

from jupyter_client.manager import KernelManager

TRIVIAL = {"nudge": "1 + 1", "python3": "1 + 1"}


def start_time(name):
    """Seconds from launching the kernel to the reply of the first kernel_info request.

    The request is sent at once; the client's socket holds it until the kernel
    has bound its ports, so the time covers process start, binding and the reply.
    """
    km = KernelManager(kernel_name=name)
    t0 = time.perf_counter()
    km.start_kernel()
    kc = km.client()
    kc.start_channels()
    try:
        msg_id = kc.kernel_info()
        while True:
            reply = kc.get_shell_msg(timeout=60)
            if reply["parent_header"].get("msg_id") == msg_id:
                break
        dt = time.perf_counter() - t0
    finally:
        kc.stop_channels()
        km.shutdown_kernel(now=True)
    return dt


def round_trips(name, rounds):
    km = KernelManager(kernel_name=name)
    km.start_kernel()
    kc = km.client()
    kc.start_channels()
    times = []
    try:
        kc.wait_for_ready(timeout=60)
        for i in range(rounds + 5):
            t0 = time.perf_counter()
            msg_id = kc.execute(TRIVIAL[name], store_history=False)
            reply = kc.get_shell_msg(timeout=30)
            while reply["parent_header"].get("msg_id") != msg_id:  # a late kernel_info reply
                reply = kc.get_shell_msg(timeout=30)
            assert reply["content"]["status"] == "ok", reply["content"]
            while True:
                m = kc.get_iopub_msg(timeout=30)
                if (m["parent_header"].get("msg_id") == msg_id and m["msg_type"] == "status"
                        and m["content"]["execution_state"] == "idle"):
                    break
            if i >= 5:  # warm-up rounds are not counted
                times.append(time.perf_counter() - t0)
    finally:
        kc.stop_channels()
        km.shutdown_kernel(now=True)
    return times


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=200)
    ap.add_argument("--starts", type=int, default=5)
    a = ap.parse_args()
    res = {}
    for name in ("nudge", "python3"):
        starts = [start_time(name) for _ in range(a.starts)]
        rt = round_trips(name, a.rounds)
        res[name] = (statistics.median(starts), statistics.median(rt))
        print(f"{name:8s} start-up median {1000 * res[name][0]:8.1f} ms   round trip median {1000 * res[name][1]:7.2f} ms"
              f"   ({a.starts} starts, {a.rounds} round trips)")
    s = res["nudge"][0] / res["python3"][0]
    r = res["nudge"][1] / res["python3"][1]
    print(f"ratio nudge/ipykernel: start-up {s:.3f} (target <= 0.1), round trip {r:.3f} (target <= 0.333)")
    return 0


if __name__ == "__main__":
    sys.exit(main())

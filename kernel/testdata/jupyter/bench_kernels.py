"""Side-by-side start-up and round-trip times of the nudge kernel and ipykernel.

Usage: /usr/bin/python3 bench_kernels.py [--rounds N] [--starts M]
(with the nudge kernelspec on JUPYTER_PATH; `make bench-kernels` sets it up).

For each kernel, in one run on one machine, with the same jupyter_client code:
  start-up   from launching the kernel process to the reply to the first
             kernel_info_request. The client connects once the kernel's shell
             port accepts TCP connections (polled every 2 ms), so libzmq's
             100 ms reconnect back-off does not hide the kernel's own start.
  round trip median time from sending a trivial execute_request to its
             execute_reply on the shell channel.
  full cycle median time from the request to the idle status on iopub, after
             the reply, busy, execute_input and execute_result; jupyter_client
             unpacks and verifies every one of those in Python, which the
             figure includes for both kernels alike.
Prints the medians and the ratios nudge / ipykernel.
"""
import argparse
import socket
import statistics
import sys
import time

from jupyter_client.manager import KernelManager

TRIVIAL = "1 + 1"


def wait_port(ip, port, deadline):
    while time.perf_counter() < deadline:
        try:
            with socket.create_connection((ip, port), timeout=0.05):
                return
        except OSError:
            time.sleep(0.002)
    raise RuntimeError("kernel did not open its shell port")


def start_time(name):
    km = KernelManager(kernel_name=name)
    t0 = time.perf_counter()
    km.start_kernel()
    wait_port(km.ip, km.shell_port, t0 + 60)
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
    rt, cycle = [], []
    try:
        kc.wait_for_ready(timeout=60)
        for i in range(rounds + 10):
            t0 = time.perf_counter()
            msg_id = kc.execute(TRIVIAL, store_history=False)
            reply = kc.get_shell_msg(timeout=30)
            while reply["parent_header"].get("msg_id") != msg_id:  # a late kernel_info reply
                reply = kc.get_shell_msg(timeout=30)
            t1 = time.perf_counter()
            assert reply["content"]["status"] == "ok", reply["content"]
            while True:
                m = kc.get_iopub_msg(timeout=30)
                if (m["parent_header"].get("msg_id") == msg_id and m["msg_type"] == "status"
                        and m["content"]["execution_state"] == "idle"):
                    break
            t2 = time.perf_counter()
            if i >= 10:  # warm-up rounds are not counted
                rt.append(t1 - t0)
                cycle.append(t2 - t0)
    finally:
        kc.stop_channels()
        km.shutdown_kernel(now=True)
    return rt, cycle


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=300)
    ap.add_argument("--starts", type=int, default=7)
    a = ap.parse_args()
    res = {}
    for name in ("nudge", "python3"):
        starts = [start_time(name) for _ in range(a.starts)]
        rt, cycle = round_trips(name, a.rounds)
        res[name] = (statistics.median(starts), statistics.median(rt), statistics.median(cycle))
        print(f"{name:8s} start-up {1000 * res[name][0]:7.1f} ms   round trip {1000 * res[name][1]:6.2f} ms"
              f"   full cycle {1000 * res[name][2]:6.2f} ms   (medians of {a.starts} starts, {a.rounds} executes)")
    n, p = res["nudge"], res["python3"]
    print(f"ratio nudge/ipykernel: start-up {n[0] / p[0]:.3f} (target <= 0.1), "
          f"round trip {n[1] / p[1]:.3f} (target <= 0.333), full cycle {n[2] / p[2]:.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())

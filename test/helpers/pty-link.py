"""A serial line on a real pseudo-terminal, driven by commands on stdin (one per line), for the serial tests.

plug PATH            open a pty, set it raw, link PATH to its slave side; prints "plugged <tty>"
send FIRST COUNT     write frames seq FIRST.. at ~1000 frames/s in batches split mid-line, with a noise line every
                     250 frames; prints "sent <count> <frames/s>"
unplug               close both sides and remove PATH (the radio is pulled out); prints "unplugged"
vanish               remove PATH but keep the pty open (the device node goes while the port still reads); prints
                     "vanished"
quit                 exit
"""
import json
import os
import pty
import sys
import time
import tty

master = slave = None
link = None


def write_all(fd, data):
    while data:
        n = os.write(fd, data)
        data = data[n:]


def frame(seq):
    return json.dumps({"t_s": round(seq * 0.002, 6), "tas_mps": 20.0, "alt_m": 100, "bank_deg": 30, "seq": seq},
                      separators=(",", ":")).encode() + b"\n"


for line in sys.stdin:
    words = line.split()
    if not words:
        continue
    cmd = words[0]
    if cmd == "plug":
        link = words[1]
        master, slave = pty.openpty()
        tty.setraw(slave)
        name = os.ttyname(slave)
        if os.path.lexists(link):
            os.unlink(link)
        os.symlink(name, link)
        print("plugged", name, flush=True)
    elif cmd == "send":
        first, count = int(words[1]), int(words[2])
        start = time.monotonic()
        batch = b""
        for i in range(count):
            seq = first + i
            batch += frame(seq)
            if (seq + 1) % 250 == 0:
                batch += b"\x00\xff\xfeNOISE\x01\n"
            if len(batch) >= 10 * 80 or i == count - 1:
                cut = len(batch) // 2 + 7  # split a line across two writes
                write_all(master, batch[:cut])
                write_all(master, batch[cut:])
                batch = b""
                due = start + (i + 1) / 1000.0
                delay = due - time.monotonic()
                if delay > 0:
                    time.sleep(delay)
        elapsed = max(time.monotonic() - start, 1e-6)
        print("sent", count, round(count / elapsed), flush=True)
    elif cmd == "unplug":
        os.close(master)
        os.close(slave)
        os.unlink(link)
        print("unplugged", flush=True)
    elif cmd == "vanish":
        os.unlink(link)
        print("vanished", flush=True)
    elif cmd == "quit":
        break

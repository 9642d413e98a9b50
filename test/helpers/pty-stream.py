"""A serial radio on a real pseudo-terminal that streams continuously, for the fault tests. Commands on stdin:

plug PATH            open a pty, set it raw, link PATH to its slave side; prints "plugged <tty>"
stream FIRST RATE    start writing frames seq FIRST, FIRST+1, ... at RATE frames/s in the background (batches every
                     10 ms, a line split across two writes, a noise line every 100 frames); prints "streaming"
pause                stop writing; prints "paused LAST" (LAST = last seq written, -1 if none)
unplug               stop writing, close both sides and remove PATH mid-stream; prints "unplugged LAST"
quit                 exit
"""
import json
import os
import pty
import sys
import threading
import time
import tty

master = slave = None
link = None
writer = None
stop = threading.Event()
last_written = -1


def write_all(fd, data):
    while data:
        n = os.write(fd, data)
        data = data[n:]


def frame(seq):
    return json.dumps({"t_s": round(seq * 0.002, 6), "tas_mps": 20.0, "alt_m": 100, "bank_deg": 30, "seq": seq},
                      separators=(",", ":")).encode() + b"\n"


def stream(first, rate):
    global last_written
    start = time.monotonic()
    seq = first
    while not stop.is_set():
        due = first + int((time.monotonic() - start) * rate)
        batch = b""
        batch_last = seq - 1
        while seq < due:
            batch += frame(seq)
            if (seq + 1) % 100 == 0:
                batch += b"\x00\x01NOISE\n"
            batch_last = seq
            seq += 1
        if batch:
            cut = len(batch) // 2 + 3  # a line split across two writes
            write_all(master, batch[:cut])
            write_all(master, batch[cut:])
            last_written = batch_last
        time.sleep(0.01)


def halt():
    global writer
    if writer is not None:
        stop.set()
        writer.join()
        writer = None
        stop.clear()


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
    elif cmd == "stream":
        halt()
        last_written = int(words[1]) - 1
        writer = threading.Thread(target=stream, args=(int(words[1]), float(words[2])), daemon=True)
        writer.start()
        print("streaming", flush=True)
    elif cmd == "pause":
        halt()
        print("paused", last_written, flush=True)
    elif cmd == "unplug":
        halt()
        os.close(master)
        os.close(slave)
        os.unlink(link)
        print("unplugged", last_written, flush=True)
    elif cmd == "quit":
        halt()
        break

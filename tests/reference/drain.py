"""Decoding alone, delivered: run ffmpeg with the options spotlever's video source uses, writing raw
pictures to a pipe, and read them in whole-picture reads into one buffer that is then thrown away (the
same 1 MiB pipe buffer spotlever asks for). This is the floor for a consumer of ffmpeg's pipe: decoding
plus moving every picture from ffmpeg into another process, with no work done on it.

Usage: python drain.py FRAME_BYTES FFMPEG_ARG... ; prints the number of pictures read.
"""

import fcntl
import subprocess
import sys

F_SETPIPE_SZ = 1031  # Linux fcntl command number (linux/fcntl.h: F_LINUX_SPECIFIC_BASE + 7)


def main():
    frame_bytes = int(sys.argv[1])
    cmd = ["ffmpeg"] + sys.argv[2:] + ["pipe:1"]
    p = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, bufsize=0)
    try:
        fcntl.fcntl(p.stdout.fileno(), F_SETPIPE_SZ, 1 << 20)
    except OSError:
        pass
    buf = bytearray(frame_bytes)
    view = memoryview(buf)
    n = 0
    while True:
        filled = 0
        while filled < frame_bytes:
            k = p.stdout.readinto(view[filled:])
            if not k:
                break
            filled += k
        if filled < frame_bytes:
            break
        n += 1
    if p.wait() != 0:
        sys.exit(f"ffmpeg exited {p.returncode}")
    print(n)


if __name__ == "__main__":
    main()

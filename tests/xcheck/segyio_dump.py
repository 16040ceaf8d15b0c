"""segyio_dump -- prints what the independent segyio library reads from a SEG-Y file.

Used by tests/unit/check_segy.c to check files tzero writes against segyio
(Debian python3-segyio). Output, one fact per line:
  bin POS VALUE          binary header value at byte POS (segyio's own decoding)
  traces N               trace count
  hdr I POS VALUE        trace I header value at byte POS
  trc I V0 V1 ...        trace I samples as float32, printed with 9 significant digits
Not a test by itself (its name does not start with test_).
"""
import sys

import segyio

BIN = [3205, 3213, 3217, 3221, 3225, 3227, 3229, 3255, 3501, 3503, 3505]
HDR = [1, 5, 9, 13, 17, 21, 25, 29, 33, 37, 41, 45, 69, 71, 73, 77, 81, 85, 89, 109, 111,
       113, 115, 117, 181, 185, 189, 193, 197, 201]


def main(path):
    with segyio.open(path, ignore_geometry=True) as f:
        for pos in BIN:
            print(f"bin {pos} {f.bin[pos]}")
        print(f"traces {f.tracecount}")
        for i in range(f.tracecount):
            h = f.header[i]
            for pos in HDR:
                print(f"hdr {i} {pos} {h[pos]}")
            print(f"trc {i} " + " ".join(f"{float(v):.9g}" for v in f.trace[i]))
        print("text " + f.text[0][:80].decode("ascii", "replace").replace(" ", "_"))


if __name__ == "__main__":
    main(sys.argv[1])

# Reads qcow2 images with Debian's python3-libqcow (module pyqcow), an independent reference reader,
# so the tests can compare what it sees with what the test writer meant to write.
# stdin: {"images": [{"chain": [top, backing, ...], "reads": [[offset, length], ...]}]}
# stdout: {"results": [{"mediaSize": n, "reads": ["hex", ...]} | {"error": "..."}]}
import json
import sys

import pyqcow


def open_chain(paths):
    files = []
    for path in paths:
        f = pyqcow.file()
        f.open(path)
        files.append(f)
    for upper, lower in zip(files, files[1:]):
        upper.set_parent(lower)
    return files


def main():
    request = json.load(sys.stdin)
    results = []
    for image in request["images"]:
        try:
            files = open_chain(image["chain"])
            top = files[0]
            reads = [top.read_buffer_at_offset(length, offset).hex() for offset, length in image["reads"]]
            results.append({"mediaSize": top.get_media_size(), "reads": reads})
            for f in files:
                f.close()
        except Exception as error:  # reported to the test, which fails with the message
            results.append({"error": "%s: %s" % (type(error).__name__, error)})
    json.dump({"results": results}, sys.stdout)


main()

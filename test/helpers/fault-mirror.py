#!/usr/bin/python3
"""A read-only FUSE mirror of a folder that fails as a bad card does, for tests.

    /usr/bin/python3 fault-mirror.py SOURCE MOUNTPOINT [--eio NAME:FROM[-TO]]... [--short NAME:BYTES]...

--eio NAME:FROM-TO  reads of NAME that reach bytes FROM to TO (or past FROM, without TO) fail with
                    EIO (a bad sector, a failing reader); reads that stay before FROM succeed
--short NAME:BYTES  NAME has its full size in its listing until a read reaches BYTES, which returns
                    less than asked: the kernel takes that as the file's end and shrinks it (a file
                    cut short while it is read)

Runs in the foreground until unmounted (fusermount -u MOUNTPOINT). Needs Debian's python3-fusepy
(module fusepy) and fuse3, and /dev/fuse.
"""
import errno
import os
import sys

from fusepy import FUSE, FuseOSError, Operations


class FaultMirror(Operations):
    def __init__(self, root, eio, short):
        self.root = root
        self.eio = eio
        self.short = short

    def _full(self, path):
        return os.path.join(self.root, path.lstrip('/'))

    def getattr(self, path, fh=None):
        st = os.lstat(self._full(path))
        return {key: getattr(st, key) for key in ('st_atime', 'st_ctime', 'st_gid', 'st_mode', 'st_mtime', 'st_nlink', 'st_size', 'st_uid')}

    def readdir(self, path, fh):
        return ['.', '..'] + os.listdir(self._full(path))

    def open(self, path, flags):
        if flags & (os.O_WRONLY | os.O_RDWR):
            raise FuseOSError(errno.EROFS)
        return os.open(self._full(path), os.O_RDONLY)

    def read(self, path, size, offset, fh):
        name = path.lstrip('/')
        if name in self.short:
            size = max(0, min(size, self.short[name] - offset))
        if name in self.eio:
            start, end = self.eio[name]
            # As a disk does: a request that reaches a bad sector fails whole (a short answer would
            # tell the kernel that the file ends there).
            if offset < end and offset + size > start:
                raise FuseOSError(errno.EIO)
        if size == 0:
            return b''
        os.lseek(fh, offset, os.SEEK_SET)
        return os.read(fh, size)

    def release(self, path, fh):
        os.close(fh)
        return 0


def main(argv):
    if len(argv) < 2:
        sys.stderr.write(__doc__)
        return 2
    root, mountpoint = argv[0], argv[1]
    eio, short = {}, {}
    rest = argv[2:]
    while rest:
        flag, value = rest[0], rest[1]
        name, number = value.rsplit(':', 1)
        if flag == '--eio':
            start, _, end = number.partition('-')
            eio[name] = (int(start), int(end) if end else 1 << 62)
        else:
            short[name] = int(number)
        rest = rest[2:]
    FUSE(FaultMirror(os.path.abspath(root), eio, short), mountpoint, foreground=True, ro=True, nothreads=True)
    return 0


if __name__ == '__main__':
    sys.exit(main(sys.argv[1:]))

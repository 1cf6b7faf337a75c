/* fileio.c - atomic output files (temporary file + rename). */
#define _POSIX_C_SOURCE 200809L
#include "layerwise/fileio.h"

#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "layerwise/alloc.h"

lw_status lw_out_open(lw_out *o, const char *path, lw_error *err)
{
    memset(o, 0, sizeof *o);
    size_t len = strlen(path);
    o->path = lw_strdup(path);
    o->tmp = lw_malloc(len + 32);
    if (!o->path || !o->tmp) {
        lw_free(o->path);
        lw_free(o->tmp);
        memset(o, 0, sizeof *o);
        return lw_error_oom(err);
    }
    /* the temporary name keeps the folder, so rename stays on one disk */
    const char *slash = strrchr(path, '/');
    size_t dir = slash ? (size_t)(slash - path) + 1 : 0;
    memcpy(o->tmp, path, dir);
    snprintf(o->tmp + dir, len + 32 - dir, ".%s.XXXXXX", path + dir);
    int fd = mkstemp(o->tmp);
    if (fd < 0) {
        int e = errno;
        lw_status st = lw_error_set(err, LW_EIO, path, 0, "cannot write "
                                    "here: %s%s", strerror(e),
                                    e == ENOENT ? " (the folder does not "
                                    "exist)" : "");
        lw_free(o->path);
        lw_free(o->tmp);
        memset(o, 0, sizeof *o);
        return st;
    }
    fchmod(fd, 0644);
    o->fp = fdopen(fd, "wb");
    if (!o->fp) {
        close(fd);
        unlink(o->tmp);
        lw_free(o->path);
        lw_free(o->tmp);
        memset(o, 0, sizeof *o);
        return lw_error_oom(err);
    }
    return LW_OK;
}

lw_status lw_out_commit(lw_out *o, lw_error *err)
{
    int bad = ferror(o->fp) != 0;
    if (fflush(o->fp) != 0)
        bad = 1;
    if (!bad && fsync(fileno(o->fp)) != 0 && errno != EINVAL)
        bad = 1;
    int e = errno;
    if (fclose(o->fp) != 0 && !bad) {
        bad = 1;
        e = errno;
    }
    o->fp = NULL;
    lw_status st = LW_OK;
    if (bad) {
        st = lw_error_set(err, LW_EIO, o->path, 0, "writing failed (%s); "
                          "the old file, if any, is unchanged", strerror(e));
        unlink(o->tmp);
    } else if (rename(o->tmp, o->path) != 0) {
        st = lw_error_set(err, LW_EIO, o->path, 0, "cannot replace the "
                          "file: %s; the old file, if any, is unchanged",
                          strerror(errno));
        unlink(o->tmp);
    }
    lw_free(o->path);
    lw_free(o->tmp);
    memset(o, 0, sizeof *o);
    return st;
}

void lw_out_abort(lw_out *o)
{
    if (o->fp) {
        fclose(o->fp);
        unlink(o->tmp);
    }
    lw_free(o->path);
    lw_free(o->tmp);
    memset(o, 0, sizeof *o);
}

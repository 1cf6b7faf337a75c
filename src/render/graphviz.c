/*
 * graphviz.c - lay out DOT with Graphviz's dot program.
 *
 * dot runs as a separate process started with posix_spawnp (no shell):
 * the DOT text goes to its standard input and the SVG comes back on its
 * standard output, both through pipes served by one poll loop so that
 * neither side can block the other.  SIGPIPE is held back in this thread
 * while writing, so a dot that dies early is reported, not fatal.
 */
#define _POSIX_C_SOURCE 200809L
#include "layerwise/report.h"

#include <errno.h>
#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <string.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "layerwise/alloc.h"

extern char **environ;

typedef struct buf {
    char *data;
    size_t len, cap;
} buf;

static int buf_add(buf *b, const char *s, size_t n)
{
    if (b->len + n + 1 > b->cap) {
        char *d = lw_grow(b->data, &b->cap, b->len + n + 1, 1);
        if (!d)
            return -1;
        b->data = d;
    }
    memcpy(b->data + b->len, s, n);
    b->len += n;
    b->data[b->len] = '\0';
    return 0;
}

static void close_fd(int *fd)
{
    if (*fd >= 0)
        close(*fd);
    *fd = -1;
}

static int make_pipe(int p[2])
{
    if (pipe(p) != 0)
        return -1;
    fcntl(p[0], F_SETFD, FD_CLOEXEC);
    fcntl(p[1], F_SETFD, FD_CLOEXEC);
    return 0;
}

/* The first line of dot's complaint, for the message. */
static void first_line(const buf *b, char *out, size_t n)
{
    out[0] = '\0';
    if (!b->data)
        return;
    size_t i = 0;
    while (i < b->len && (b->data[i] == '\n' || b->data[i] == ' '))
        i++;
    size_t k = 0;
    while (i < b->len && b->data[i] != '\n' && k + 1 < n)
        out[k++] = b->data[i++];
    out[k] = '\0';
}

lw_status lw_dot_to_svg(const char *dot, size_t len, const char *program,
                        char **svg, size_t *svg_len, lw_error *err)
{
    *svg = NULL;
    if (svg_len)
        *svg_len = 0;
    if (!program)
        program = "dot";
    int pin[2] = {-1, -1}, pout[2] = {-1, -1}, perr[2] = {-1, -1};
    buf out = {0}, msg = {0};
    lw_status st = LW_OK;
    posix_spawn_file_actions_t fa;
    bool fa_ok = false;
    pid_t pid = -1;

    if (make_pipe(pin) || make_pipe(pout) || make_pipe(perr)) {
        st = lw_error_set(err, LW_EIO, NULL, 0,
                          "could not make pipes for %s: %s", program,
                          strerror(errno));
        goto done;
    }
    if (posix_spawn_file_actions_init(&fa) != 0) {
        st = lw_error_oom(err);
        goto done;
    }
    fa_ok = true;
    posix_spawn_file_actions_adddup2(&fa, pin[0], 0);
    posix_spawn_file_actions_adddup2(&fa, pout[1], 1);
    posix_spawn_file_actions_adddup2(&fa, perr[1], 2);
    char *argv[] = {(char *)program, (char *)"-Tsvg", NULL};
    int rc = posix_spawnp(&pid, program, &fa, NULL, argv, environ);
    if (rc != 0) {
        pid = -1;
        if (rc == ENOENT)
            st = lw_error_set(err, LW_EIO, NULL, 0,
                              "Graphviz's \"%s\" program was not found; "
                              "install Graphviz (Debian package graphviz) "
                              "to get SVG, or ask for the DOT text instead "
                              "with -o FILE.dot", program);
        else
            st = lw_error_set(err, LW_EIO, NULL, 0,
                              "could not run Graphviz's \"%s\": %s; ask for "
                              "the DOT text instead with -o FILE.dot",
                              program, strerror(rc));
        goto done;
    }
    close_fd(&pin[0]);
    close_fd(&pout[1]);
    close_fd(&perr[1]);
    fcntl(pin[1], F_SETFL, fcntl(pin[1], F_GETFL) | O_NONBLOCK);

    /* hold SIGPIPE back while writing to the child */
    sigset_t pipe_set, old_set, pending;
    sigemptyset(&pipe_set);
    sigaddset(&pipe_set, SIGPIPE);
    sigemptyset(&pending);
    sigpending(&pending);
    bool was_pending = sigismember(&pending, SIGPIPE);
    pthread_sigmask(SIG_BLOCK, &pipe_set, &old_set);

    size_t sent = 0;
    if (len == 0)
        close_fd(&pin[1]);
    char chunk[16384];
    while (pout[0] >= 0 || perr[0] >= 0) {
        struct pollfd pf[3];
        int nf = 0, iw = -1, io = -1, ie = -1;
        if (pin[1] >= 0) {
            pf[nf].fd = pin[1];
            pf[nf].events = POLLOUT;
            iw = nf++;
        }
        if (pout[0] >= 0) {
            pf[nf].fd = pout[0];
            pf[nf].events = POLLIN;
            io = nf++;
        }
        if (perr[0] >= 0) {
            pf[nf].fd = perr[0];
            pf[nf].events = POLLIN;
            ie = nf++;
        }
        if (poll(pf, (nfds_t)nf, -1) < 0) {
            if (errno == EINTR)
                continue;
            st = lw_error_set(err, LW_EIO, NULL, 0, "poll: %s",
                              strerror(errno));
            break;
        }
        if (iw >= 0 && pf[iw].revents) {
            ssize_t w = write(pin[1], dot + sent, len - sent);
            if (w > 0) {
                sent += (size_t)w;
                if (sent == len)
                    close_fd(&pin[1]);
            } else if (w < 0 && errno != EAGAIN && errno != EINTR) {
                close_fd(&pin[1]);      /* dot stopped reading */
            }
        }
        if (io >= 0 && pf[io].revents) {
            ssize_t r = read(pout[0], chunk, sizeof chunk);
            if (r > 0) {
                if (buf_add(&out, chunk, (size_t)r)) {
                    st = lw_error_oom(err);
                    break;
                }
            } else if (r == 0 || (errno != EINTR && errno != EAGAIN)) {
                close_fd(&pout[0]);
            }
        }
        if (ie >= 0 && pf[ie].revents) {
            ssize_t r = read(perr[0], chunk, sizeof chunk);
            if (r > 0) {
                if (msg.len < 65536 && buf_add(&msg, chunk, (size_t)r)) {
                    st = lw_error_oom(err);
                    break;
                }
            } else if (r == 0 || (errno != EINTR && errno != EAGAIN)) {
                close_fd(&perr[0]);
            }
        }
    }
    close_fd(&pin[1]);
    close_fd(&pout[0]);
    close_fd(&perr[0]);
    if (!was_pending) {
        sigemptyset(&pending);
        sigpending(&pending);
        if (sigismember(&pending, SIGPIPE)) {
            struct timespec zero = {0, 0};
            sigtimedwait(&pipe_set, NULL, &zero);
        }
    }
    pthread_sigmask(SIG_SETMASK, &old_set, NULL);

    int status = 0;
    while (waitpid(pid, &status, 0) < 0 && errno == EINTR)
        ;
    pid = -1;
    if (st == LW_OK) {
        char line[512];
        first_line(&msg, line, sizeof line);
        if (WIFEXITED(status) && WEXITSTATUS(status) == 127) {
            st = lw_error_set(err, LW_EIO, NULL, 0,
                              "Graphviz's \"%s\" program could not be run; "
                              "install Graphviz, or ask for the DOT text "
                              "instead with -o FILE.dot", program);
        } else if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) {
            st = lw_error_set(err, LW_EIO, NULL, 0,
                              "Graphviz's \"%s\" failed%s%s", program,
                              line[0] ? ": " : "", line);
        } else if (sent != len || out.len == 0) {
            st = lw_error_set(err, LW_EIO, NULL, 0,
                              "Graphviz's \"%s\" gave no picture%s%s",
                              program, line[0] ? ": " : "", line);
        }
    }
done:
    if (fa_ok)
        posix_spawn_file_actions_destroy(&fa);
    close_fd(&pin[0]);
    close_fd(&pin[1]);
    close_fd(&pout[0]);
    close_fd(&pout[1]);
    close_fd(&perr[0]);
    close_fd(&perr[1]);
    if (pid > 0) {
        int status2;
        waitpid(pid, &status2, 0);
    }
    lw_free(msg.data);
    if (st != LW_OK) {
        lw_free(out.data);
        return st;
    }
    *svg = out.data;
    if (svg_len)
        *svg_len = out.len;
    return LW_OK;
}

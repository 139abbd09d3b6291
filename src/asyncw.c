/* asyncw: one writer thread and two buffers. The caller's buffer and the thread's trade places in
 * aw_swap; the thread writes what it holds, then waits for the next one. */
#include "asyncw.h"

#include <pthread.h>
#include <stdlib.h>

struct AsyncW {
    FILE *fp;
    pthread_t thread;
    pthread_mutex_t mu;
    pthread_cond_t cv;
    char *job;          /* the buffer to write, NULL when the thread has nothing to do */
    size_t njob, capjob;
    char *spare;        /* the buffer written last, for the caller to fill again */
    size_t capspare;
    int busy;           /* the thread is writing job */
    int stop;
    int bad;            /* a write failed */
};

static void *writer(void *arg)
{
    AsyncW *w = arg;
    pthread_mutex_lock(&w->mu);
    for (;;) {
        while (!w->job && !w->stop)
            pthread_cond_wait(&w->cv, &w->mu);
        if (!w->job)
            break;
        char *p = w->job;
        size_t n = w->njob, cap = w->capjob;
        w->job = NULL;
        w->busy = 1;
        pthread_mutex_unlock(&w->mu);
        int ok = fwrite(p, 1, n, w->fp) == n;
        pthread_mutex_lock(&w->mu);
        w->busy = 0;
        w->bad |= !ok;
        free(w->spare); /* NULL but when the caller has not taken the last one back */
        w->spare = p;
        w->capspare = cap;
        pthread_cond_broadcast(&w->cv);
    }
    pthread_mutex_unlock(&w->mu);
    return NULL;
}

AsyncW *aw_start(FILE *fp)
{
    AsyncW *w = calloc(1, sizeof *w);
    if (!w)
        return NULL;
    w->fp = fp;
    if (pthread_mutex_init(&w->mu, NULL) != 0) {
        free(w);
        return NULL;
    }
    if (pthread_cond_init(&w->cv, NULL) != 0) {
        pthread_mutex_destroy(&w->mu);
        free(w);
        return NULL;
    }
    if (pthread_create(&w->thread, NULL, writer, w) != 0) {
        pthread_cond_destroy(&w->cv);
        pthread_mutex_destroy(&w->mu);
        free(w);
        return NULL;
    }
    return w;
}

char *aw_swap(AsyncW *w, char *buf, size_t n, size_t *cap)
{
    pthread_mutex_lock(&w->mu);
    while (w->job || w->busy) /* the previous buffer is still being written */
        pthread_cond_wait(&w->cv, &w->mu);
    w->job = buf;
    w->njob = n;
    w->capjob = *cap;
    char *next = w->spare;
    *cap = next ? w->capspare : 0;
    w->spare = NULL;
    pthread_cond_broadcast(&w->cv);
    pthread_mutex_unlock(&w->mu);
    return next;
}

int aw_finish(AsyncW *w)
{
    if (!w)
        return ERR_OK;
    pthread_mutex_lock(&w->mu);
    w->stop = 1;
    pthread_cond_broadcast(&w->cv);
    pthread_mutex_unlock(&w->mu);
    pthread_join(w->thread, NULL); /* the thread writes what it still holds before it stops */
    int bad = w->bad;
    free(w->spare);
    pthread_cond_destroy(&w->cv);
    pthread_mutex_destroy(&w->mu);
    free(w);
    return bad ? ERR_IO : ERR_OK;
}

#include "jobs.h"

#include <pthread.h>
#include <stdlib.h>
#include <unistd.h>

typedef struct {
  pthread_mutex_t mutex;
  size_t next; /* the next item nobody has taken */
  size_t count;
  size_t failed;
  job_function work;
  void *context;
} job_queue;

/* The next item, or count when none is left. */
static size_t take_item(job_queue *queue) {
  pthread_mutex_lock(&queue->mutex);
  size_t index = queue->next;
  if (queue->next < queue->count) {
    queue->next += 1;
  }
  pthread_mutex_unlock(&queue->mutex);
  return index;
}

static void *worker(void *argument) {
  job_queue *queue = argument;
  for (size_t index = take_item(queue); index < queue->count;
       index = take_item(queue)) {
    if (!queue->work(index, queue->context)) {
      pthread_mutex_lock(&queue->mutex);
      queue->failed += 1;
      pthread_mutex_unlock(&queue->mutex);
    }
  }
  return NULL;
}

size_t jobs_run(size_t count, unsigned threads, job_function work,
                void *context) {
  job_queue queue = {
      .next = 0, .count = count, .failed = 0, .work = work, .context = context};
  pthread_mutex_init(&queue.mutex, NULL);
  size_t wanted = threads < count ? threads : count;
  pthread_t *ids = calloc(wanted ? wanted : 1, sizeof *ids);
  size_t started = 0;
  while (ids && started < wanted &&
         pthread_create(&ids[started], NULL, worker, &queue) == 0) {
    ++started;
  }
  if (started == 0) {
    worker(&queue); /* no thread could start: do the work here */
  }
  for (size_t i = 0; i < started; ++i) {
    pthread_join(ids[i], NULL);
  }
  free(ids);
  pthread_mutex_destroy(&queue.mutex);
  return queue.failed;
}

unsigned jobs_default_threads(void) {
  long cores = sysconf(_SC_NPROCESSORS_ONLN);
  return cores > 0 ? (unsigned)cores : 1;
}

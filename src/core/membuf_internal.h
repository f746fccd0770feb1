/*
 * membuf_internal.h - a growing byte buffer in memory (membuf.c), where
 * documents are assembled before tram_file_write_atomic writes them: the
 * PDF and PNG streams of cairo and libpng (plot/pdf_stream.c,
 * plot/board_print.c, report/report_doc.c).
 */
#ifndef TRAM_MEMBUF_INTERNAL_H
#define TRAM_MEMBUF_INTERNAL_H

#include <stddef.h>

typedef struct tram__membuf {
    unsigned char *p;   /* the bytes (tram__malloc'd), or NULL      */
    size_t n, cap;      /* bytes held, bytes allocated             */
    int failed;         /* an append ran out of memory (sticky)    */
} tram__membuf;

/* Append len bytes; 0, or -1 when memory ran out (then, and after, every
 * append fails and b->failed is 1; the bytes held stay valid). */
int tram__membuf_put(tram__membuf *b, const void *data, size_t len);
/* Free the bytes and empty the buffer (a zeroed buffer is a no-op). */
void tram__membuf_free(tram__membuf *b);

#endif

/*
 * fuzz_board.c - libFuzzer harness for the board-file reader (JSON, format
 * tram-board version 1; docs/images.md).  A board that reads is written
 * back and read again: the writer must accept it and the second read must
 * give the same board; its corner positions are taken.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_board b, again;
    tram_error err;
    tram_error_clear(&err);
    if (tram_board_read_buffer("fuzz.json", (const char *)data, size, &b, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    char *text = NULL;
    if (tram_board_to_json(&b, &text, &err) != TRAM_OK) abort();
    if (tram_board_read_buffer("again.json", text, strlen(text), &again, &err) != TRAM_OK) abort();
    free(text);
    if (again.cols != b.cols || again.rows != b.rows || again.square != b.square || again.unit != b.unit)
        abort();
    double xyz[3];
    size_t n = tram_board_corner_count(&b);
    tram_board_corner(&b, n - 1, xyz);
    if (xyz[2] != 0.0) abort();
    return 0;
}

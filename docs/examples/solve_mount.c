/* solve_mount.c - docs/library.md: read a record file, solve, check trust, free. */
#include <stdio.h>
#include <tram/tram.h>

int main(int argc, char **argv)
{
    tram_error err;
    tram_records *rec = NULL;
    tram_solution *sol = NULL;
    tram_error_clear(&err);
    if (argc != 2 || tram_records_read_file(argv[1], NULL, &rec, &err) != TRAM_OK) {
        char msg[1200];
        fprintf(stderr, "%s\n", argc == 2 ? tram_error_format(&err, msg, sizeof msg) : "usage: solve_mount RECORDS");
        return 2;
    }
    tram_solve_options opt;
    tram_solve_options_init(&opt);
    tram_status st = tram_solve(rec, rec->setup, &opt, &sol, &err);
    /* TRAM_OK alone does not make a result usable: check sol->trustworthy. */
    int usable = st == TRAM_OK && sol->solved && sol->trustworthy;
    if (usable)
        printf("%s translation %.3f %.3f %.3f %s (consistent with the data; NOT verified on the cell)\n",
               sol->X_name, sol->X.m[0][3], sol->X.m[1][3], sol->X.m[2][3],
               tram_unit_length_name(sol->length_unit));
    for (size_t i = 0; sol && !usable && i < sol->ndiag; i++)
        fprintf(stderr, "%s: %s\n", sol->diag[i].code, sol->diag[i].message);
    tram_solution_destroy(sol);
    tram_records_destroy(rec);
    return usable ? 0 : 3;
}

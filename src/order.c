/* order.c — reading order from the XY-cut tree: a depth-first walk, children in the order
 * the cut gives them (columns left to right, bands top to bottom), so that elements spanning
 * several columns come before or after those columns as they stand on the page. */
#include "internal.h"

static void walk(const lt_cut_node *node, int *order, int *block_of, int *pos, int *block)
{
    if (node->nchildren == 0) {
        for (int i = 0; i < node->nlines; i++) {
            order[*pos] = node->lines[i];
            block_of[*pos] = *block;
            (*pos)++;
        }
        (*block)++;
        return;
    }
    for (int i = 0; i < node->nchildren; i++)
        walk(node->children[i], order, block_of, pos, block);
}

int lt_reading_order(const lt_cut_node *root, int nlines, int *order, int *block_of)
{
    int pos = 0, blocks = 0;
    if (root) walk(root, order, block_of, &pos, &blocks);
    return pos == nlines ? blocks : LT_EINVAL;
}

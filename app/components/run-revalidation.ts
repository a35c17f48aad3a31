// After a reading, the walker asks for the run's fresh data. Only the run changed, so the layout and root
// loaders (shop, memberships, notices badge, toast) sit that revalidation out: their shouldRevalidate reads
// this flag. The walker's regular poll still revalidates everything, so the notices badge stays current.
let runOnly = false;

/** Starts a revalidation of the run's loader only; call `endRunOnlyRevalidation` once it is idle again. */
export function revalidateRunOnly(revalidate: () => unknown) {
  runOnly = true;
  revalidate();
}

export function endRunOnlyRevalidation() {
  runOnly = false;
}

export const isRunOnlyRevalidation = () => runOnly;

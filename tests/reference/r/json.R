# A small JSON writer for the fixture scripts (base R has none): json(x) writes lists as
# objects or arrays, arr(x) marks a vector as an array even of length one, numbers with 17
# significant digits, and NA or non-finite numbers as null.
arr <- function(x) structure(as.list(x), class = "json_array")
json <- function(x) {
  if (is.null(x)) return("null")
  if (inherits(x, "json_array")) return(paste0("[", paste(vapply(unclass(x), json, ""), collapse = ","), "]"))
  if (is.list(x)) {
    keys <- names(x)
    if (is.null(keys)) return(paste0("[", paste(vapply(x, json, ""), collapse = ","), "]"))
    body <- vapply(seq_along(x), function(i) paste0(json(keys[i]), ":", json(x[[i]])), "")
    return(paste0("{", paste(body, collapse = ","), "}"))
  }
  if (length(x) != 1) return(json(arr(x)))
  if (is.na(x)) return("null")
  if (is.logical(x)) return(if (x) "true" else "false")
  if (is.numeric(x)) {
    if (!is.finite(x)) return("null")
    return(sprintf("%.17g", x))
  }
  s <- gsub("\\\\", "\\\\\\\\", as.character(x))
  s <- gsub("\"", "\\\\\"", s)
  paste0("\"", s, "\"")
}

// Staff tables: sorting long tables by a column.

package store

// ListChangesQuery is ListChanges' statement, for the plan test.
const ListChangesQuery = listChangesQuery

// Package chained imputes the missing values of a table by chained
// equations: starting from random draws of each column's observed values,
// it visits the incomplete columns in turn, fits each one's model on the
// rows where it is observed given the current values of every other
// column, draws the model's parameters from their approximate posterior
// and imputes the missing cells from the drawn model. Numeric columns take
// predictive mean matching (donors among the five observed values with
// the closest predicted means) or a draw from the normal linear model;
// categorical and ordered columns a logistic, multinomial logit or
// cumulative logit model fitted by runner/fit. Each imputed set draws from
// its own seeded stream, so the sets do not depend on the number of
// workers. The statistics and their sources are in docs/models.md
// ("Imputation by chained equations").
package chained

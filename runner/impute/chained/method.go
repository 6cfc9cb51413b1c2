package chained

import (
	"fmt"

	"ordplan/internal/words"
)

// Kind is what a column holds.
type Kind int

// The kinds of columns.
const (
	Numeric     Kind = iota // numbers
	Categorical             // level indexes 0..Levels-1, unordered
	Ordered                 // level indexes 0..Levels-1, ordered
)

func (k Kind) String() string { return [...]string{"numeric", "categorical", "ordered"}[k] }

// Method is how one column's missing values are imputed.
type Method int

// The imputation models.
const (
	Default      Method = iota // the column's default (DefaultMethod)
	MeanMatching               // predictive mean matching on the normal linear model
	NormalDraw                 // a draw from the normal linear model
	Logistic                   // binary logistic regression (two levels)
	Multinomial                // multinomial logit (unordered levels)
	Ordinal                    // cumulative logit with parallel slopes (ordered levels)
)

// MethodWords is the vocabulary of imputation models, in the order of the
// constants; Default has no word a plan can write ("" is the first entry
// only to keep the indexes).
var MethodWords = words.New[Method]("imputation model", "default", "mean_matching", "normal_draw", "logistic", "multinomial", "ordinal")

// PlanWords are the words a plan may give a column (every word but default).
func PlanWords() []string { return MethodWords.Names()[1:] }

// OrList writes the plan's words as "a, b or c".
func OrList() string { return words.OrList(PlanWords()) }

func (m Method) String() string { return MethodWords.Name(m) }

// MarshalText writes the method's word.
func (m Method) MarshalText() ([]byte, error) { return MethodWords.Text(m) }

// UnmarshalText reads a method's word.
func (m *Method) UnmarshalText(b []byte) (err error) {
	*m, err = MethodWords.Parse(string(b))
	return err
}

// DefaultMethod is the model a column gets unless the plan names another:
// predictive mean matching for numbers, logistic regression for two
// levels, multinomial logit for more unordered levels and the cumulative
// logit for more ordered ones (the outcome among them).
func DefaultMethod(kind Kind, levels int) Method {
	switch {
	case kind == Numeric:
		return MeanMatching
	case levels == 2:
		return Logistic
	case kind == Ordered:
		return Ordinal
	}
	return Multinomial
}

// Fits says whether method m can impute a column of this kind, and if not
// why, in words for a message.
func Fits(m Method, kind Kind, levels int) (bool, string) {
	switch m {
	case Default:
		return true, ""
	case MeanMatching, NormalDraw:
		if kind != Numeric {
			return false, fmt.Sprintf("%s imputes numeric columns; this column is %s (use %s)", m, kind, DefaultMethod(kind, levels))
		}
	case Logistic:
		if kind == Numeric {
			return false, "logistic imputes a column with two levels; this column is numeric (declare it under categorical with its two levels to impute it by logistic regression, or use mean_matching)"
		}
		if levels != 2 {
			return false, fmt.Sprintf("logistic imputes a column with two levels; this column is %s", describe(kind, levels))
		}
	case Multinomial:
		if kind == Numeric {
			return false, "multinomial imputes a categorical column; this column is numeric (use mean_matching or normal_draw)"
		}
	case Ordinal:
		if kind != Ordered && !(kind == Categorical && levels == 2) {
			return false, fmt.Sprintf("ordinal imputes ordered levels; this column is %s (declare it ordered under categorical, or use %s)", describe(kind, levels), DefaultMethod(kind, levels))
		}
	}
	return true, ""
}

func describe(kind Kind, levels int) string {
	if kind == Numeric {
		return "numeric"
	}
	return fmt.Sprintf("%s with %d levels", kind, levels)
}

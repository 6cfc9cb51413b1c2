module ordplan

go 1.26.8

require (
	github.com/go-echarts/go-echarts/v2 v2.6.7
	github.com/yuin/goldmark v1.8.7
	gonum.org/v1/gonum v0.17.0
	gopkg.in/yaml.v3 v3.0.1
)

require github.com/kr/text v0.2.0 // indirect

package render

import _ "embed"

// echartsJS is the chart library, written inline into report.html so the
// page draws its charts offline. See assets/README.md for its source and
// licence.
//
//go:embed assets/echarts.min.js
var echartsJS string

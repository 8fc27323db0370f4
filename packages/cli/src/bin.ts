#!/usr/bin/env node
console.log('subgauge');
